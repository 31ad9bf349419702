import { execFileSync } from 'node:child_process';
import { closeSync, ftruncateSync, openSync, writeSync } from 'node:fs';
import { join } from 'node:path';
import { build } from 'esbuild';
import { describe, expect, it } from 'vitest';
import { root, tempDir } from './support.ts';

describe('WavReader memory', () => {
  it('streams a 200 MB file with RSS growth bounded far below the file size', async () => {
    const dir = tempDir('wavmem');
    const path = join(dir, 'sparse.wav');
    const frames = 50_000_000; // int16 stereo: 200 MB of data
    const dataBytes = frames * 4;
    // A canonical 44-byte PCM header (Microsoft RIFF spec 1991), then a sparse hole of zeros as the data.
    const h = Buffer.alloc(44);
    h.write('RIFF', 0, 'latin1');
    h.writeUInt32LE(36 + dataBytes, 4);
    h.write('WAVEfmt ', 8, 'latin1');
    h.writeUInt32LE(16, 16);
    h.writeUInt16LE(1, 20);
    h.writeUInt16LE(2, 22);
    h.writeUInt32LE(48000, 24);
    h.writeUInt32LE(48000 * 4, 28);
    h.writeUInt16LE(4, 32);
    h.writeUInt16LE(16, 34);
    h.write('data', 36, 'latin1');
    h.writeUInt32LE(dataBytes, 40);
    const fd = openSync(path, 'w');
    writeSync(fd, h);
    ftruncateSync(fd, 44 + dataBytes);
    closeSync(fd);
    const child = join(dir, 'child.mjs');
    await build({
      entryPoints: [join(root, 'tests/wav/read-all-child.ts')],
      outfile: child,
      bundle: true,
      platform: 'node',
      format: 'esm',
      logLevel: 'error',
    });
    const out = JSON.parse(execFileSync(process.execPath, [child, path], { encoding: 'utf8' }));
    expect(out.frames).toBe(frames);
    expect(out.sum).toBe(0);
    // Whole-file decoding would need 2 × 50e6 × 8 B = 800 MB of Float64Array; streaming needs ~1 MB of buffers.
    expect(out.growthBytes).toBeLessThan(64 * 1024 * 1024);
  });
});
