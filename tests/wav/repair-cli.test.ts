import { copyFileSync } from 'node:fs';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { SeededRandom } from '../../dsp/random.ts';
import { WavWriter } from '../../agent/wav/writer.ts';
import { runCli } from '../analyze/support.ts';
import { Python, tempDir } from './support.ts';

let py: Python;
beforeAll(() => {
  py = new Python();
});
afterAll(() => py.close());

describe('floorline repair', () => {
  it('recovers the frames written after the last flush, then finds nothing to do', async () => {
    const dir = tempDir('repair-cli');
    const path = join(dir, 'rec.wav');
    const data = [new SeededRandom(5).fillGaussian(new Float64Array(5000), 1e-6)];
    const w = new WavWriter(
      path,
      { sampleRate: 1000, channels: [{ name: 'ch0', unit: 'V' }], firstSample: 0 },
      { bufferFrames: 1000, durable: false },
    );
    w.append(data, 2000);
    w.flush();
    w.append(data, 3000, 2000); // three more full buffers reach the disk, the header still says 2000
    const crashed = join(dir, 'crashed.wav');
    copyFileSync(path, crashed);
    w.close();
    // Before: analyze believes the header and says how to recover the rest.
    const before = runCli('analyze', crashed, '--json', '--segment', '64');
    expect(JSON.parse(before.stdout).samples).toBe(2000);
    expect(before.stderr).toMatch(/floorline repair FILE/);
    const r = runCli('repair', crashed);
    expect(r.status).toBe(0);
    expect(r.stdout).toMatch(/repaired: 5000 frames \(header said 8000 data bytes\), RIFF/);
    // Reference: scipy.io.wavfile.read of the repaired file gives all 5000 float32 samples.
    const n = await py.run<number>('r, d = wavfile.read(args[0]); result = int(d.shape[0])', crashed);
    expect(n).toBe(5000);
    expect(runCli('repair', crashed).stdout).toMatch(/nothing to repair: 5000 frames/);
    const bad = runCli('repair', join(dir, 'missing.wav'));
    expect(bad.status).toBe(2);
    expect(bad.stderr).toMatch(/missing\.wav: no such file or folder; check the path/);
  });

  it('recovers samples after a stale data size even when they read as a chunk id (our recordings put data last)', async () => {
    const dir = tempDir('repair-printable');
    const path = join(dir, 'rec.wav');
    // 0x3A2F2B20 as float32 is about 6.7e-4: a small positive sample whose four bytes " +/:" are printable ASCII,
    // so a chunk walk takes them for a chunk id (RIFF ids are four printable characters, from memory of the spec).
    const printable = new Float32Array(new Uint32Array([0x3a2f2b20]).buffer)[0];
    const data = [new Float64Array(6000).fill(printable)];
    const w = new WavWriter(
      path,
      { sampleRate: 1000, channels: [{ name: 'ch0', unit: 'V' }], firstSample: 0 },
      { bufferFrames: 1000, durable: false },
    );
    w.append(data, 2000); // the declared size ends at a frame boundary…
    w.flush();
    w.append(data, 4000, 2000); // …and the bytes after it are these samples, flushed with the header not yet patched
    const crashed = join(dir, 'crashed.wav');
    copyFileSync(path, crashed);
    w.close();
    const r = runCli('repair', crashed);
    expect(r.stderr).toBe('');
    expect(r.status).toBe(0);
    expect(r.stdout).toMatch(/repaired: 6000 frames/);
    // Reference: scipy.io.wavfile.read sees all 6000 samples, each the printable-looking value.
    const got = await py.run<[number, number]>(
      'r, d = wavfile.read(args[0]); result = [int(d.shape[0]), float(d[-1])]',
      crashed,
    );
    expect(got[0]).toBe(6000);
    expect(got[1]).toBe(printable);
  });
});
