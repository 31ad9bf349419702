import { copyFileSync, appendFileSync, readFileSync, statSync } from 'node:fs';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { SeededRandom } from '../../dsp/random.ts';
import { wavIoError } from '../../agent/wav/errors.ts';
import { readWavFile } from '../../agent/wav/reader.ts';
import { repairWav } from '../../agent/wav/repair.ts';
import { WavWriter, type WavWriterMetadata } from '../../agent/wav/writer.ts';
import { hexToFloat32, Python, tempDir } from './support.ts';

let dir: string;
beforeAll(() => {
  dir = tempDir('wavw');
});

const meta: WavWriterMetadata = {
  sampleRate: 20000,
  channels: [
    { name: 'lna-out', unit: 'V', scale: 1.25e-6, gain: 100 },
    { name: 'adc-ref', unit: 'V', scale: 1.25e-6 },
    { name: 'shield', unit: 'V' },
  ],
  source: { kind: 'simulator', label: 'bench rig B' },
  firstSample: 4_000_000,
  startWallTime: '2026-12-01T22:00:00.000Z',
};

function signal(seed: number, frames: number, channels = 3): Float64Array[] {
  const rng = new SeededRandom(seed);
  return Array.from({ length: channels }, (_, c) => rng.fillGaussian(new Float64Array(frames), 10 ** -(c + 3)));
}

/** Appends `data` in uneven pieces, as a recorder's blocks arrive. */
function appendInPieces(w: WavWriter, data: Float64Array[], from = 0, to = data[0].length): void {
  const pieces = [1, 7, 500, 1023, 4096];
  for (let at = from, k = 0; at < to; k++) {
    const n = Math.min(pieces[k % pieces.length], to - at);
    w.append(data, n, at);
    at += n;
  }
}

let py: Python;
beforeAll(() => {
  py = new Python();
});
afterAll(() => py.close());

/** scipy.io.wavfile.read(path): rate, dtype, shape and the samples as float32. */
async function scipyRead(
  path: string,
): Promise<{ rate: number; dtype: string; frames: number; channels: number; samples: Float32Array }> {
  const j = await py.run<{ rate: number; dtype: string; frames: number; channels: number; hex: string }>(
    `r, d = wavfile.read(args[0]); d = d.reshape(d.shape[0], -1)
result = {"rate": int(r), "dtype": str(d.dtype), "frames": d.shape[0], "channels": d.shape[1], "hex": d.astype("<f4").tobytes().hex()}`,
    path,
  );
  return { ...j, samples: hexToFloat32(j.hex) };
}

function countMismatches(samples: Float32Array, data: Float64Array[], frames: number): number {
  let bad = 0;
  const ch = data.length;
  for (let i = 0; i < frames; i++)
    for (let c = 0; c < ch; c++) if (samples[i * ch + c] !== Math.fround(data[c][i])) bad++;
  return bad;
}

describe('WavWriter', () => {
  it('writes float32 files that scipy.io.wavfile.read opens with identical samples and a valid sidecar', async () => {
    const path = join(dir, 'rig.wav');
    const data = signal(1, 12345);
    const w = new WavWriter(path, meta, { bufferFrames: 1000, durable: false });
    appendInPieces(w, data);
    w.close();
    const got = await scipyRead(path);
    // Reference: scipy.io.wavfile.read gives rate, float32 dtype, shape (12345, 3) and the float32 samples.
    expect(got).toMatchObject({ rate: 20000, dtype: 'float32', frames: 12345, channels: 3 });
    expect(countMismatches(got.samples, data, 12345)).toBe(0);
    // Reference: python's json module parses the sidecar.
    const side = await py.run<Record<string, unknown> & { channels: { name: string }[] }>(
      'result = json.load(open(args[0]))',
      `${path}.json`,
    );
    expect(side).toMatchObject({ schema: 'floorline.recording/1', sampleRate: 20000, firstSample: 4_000_000 });
    expect(side.channels.map((c: { name: string }) => c.name)).toEqual(['lna-out', 'adc-ref', 'shield']);
  });

  it('embeds the metadata so a lone WAV still names its channels, units and first sample', async () => {
    const path = join(dir, 'lone.wav');
    const w = new WavWriter(path, meta, { durable: false });
    w.append(signal(2, 100), 100);
    w.close();
    const { info } = await readWavFile(path, { sidecar: false });
    expect(info.metadataFrom).toBe('chunk');
    expect(info.channels.map((c) => `${c.name}/${c.unit}`)).toEqual(['lna-out/V', 'adc-ref/V', 'shield/V']);
    expect(info.firstSample).toBe(4_000_000);
    expect(info.startWallTime).toBe('2026-12-01T22:00:00.000Z');
    // scipy.io.wavfile.read skips the unknown 'flmd' chunk and still finds all 100 frames.
    expect((await scipyRead(path)).frames).toBe(100);
  });

  it('keeps the header right after every flush, so a reader mid-recording sees exactly the flushed frames', async () => {
    const path = join(dir, 'live.wav');
    const data = signal(3, 9000);
    const w = new WavWriter(path, meta, { bufferFrames: 4096, durable: true });
    appendInPieces(w, data, 0, 3000);
    w.flush();
    const mid = await scipyRead(path); // scipy.io.wavfile.read while the writer is still open
    expect(mid.frames).toBe(3000);
    expect(countMismatches(mid.samples, data, 3000)).toBe(0);
    appendInPieces(w, data, 3000, 9000);
    w.close();
    expect((await scipyRead(path)).frames).toBe(9000);
  });

  it('leaves a crash-readable file and repairWav restores every whole frame on disk', async () => {
    const path = join(dir, 'crash.wav');
    const data = signal(4, 20000);
    const w = new WavWriter(path, meta, { bufferFrames: 512, durable: false });
    appendInPieces(w, data, 0, 5000);
    w.flush();
    appendInPieces(w, data, 5000, 20000); // full buffers reach the disk; the header still says 5000
    const crashed = join(dir, 'crashed.wav');
    copyFileSync(path, crashed); // the file as a killed process leaves it
    w.close();
    appendFileSync(crashed, Buffer.from([1, 2, 3, 4, 5])); // and half a frame of a torn last write
    const before = await readWavFile(crashed);
    expect(before.info.frames).toBe(5000); // the patched header is believed until repaired
    expect(before.info.warnings.join(' ')).toMatch(
      /samples written after the last header update.*`floorline repair FILE` recovers them/,
    );
    const written = 5000 + Math.floor(15000 / 512) * 512; // flushed, then only full 512-frame buffers reach the disk
    const result = await repairWav(crashed);
    expect(result).toMatchObject({ frames: written, declaredBefore: 5000 * 12, droppedBytes: 5, changed: true });
    const got = await scipyRead(crashed); // scipy.io.wavfile.read of the repaired file
    expect(got.frames).toBe(written);
    expect(countMismatches(got.samples, data, written)).toBe(0);
    expect(statSync(crashed).size).toBe(statSync(path).size - (20000 - written) * 12);
    expect((await repairWav(crashed)).changed).toBe(false);
  });

  it('reads and repairs a recording whose sizes were never patched', async () => {
    const path = join(dir, 'never.wav');
    const data = signal(5, 3000);
    const w = new WavWriter(path, meta, { bufferFrames: 1000, durable: false });
    appendInPieces(w, data, 0, 3000); // three buffer writes, no flush
    const crashed = join(dir, 'never-crashed.wav');
    copyFileSync(path, crashed);
    w.close();
    const { info, data: got } = await readWavFile(crashed);
    expect(info.frames).toBe(3000);
    expect(info.warnings.join(' ')).toMatch(/never written/);
    expect(got[2][2999]).toBe(Math.fround(data[2][2999]));
    await repairWav(crashed);
    expect((await scipyRead(crashed)).frames).toBe(3000); // scipy.io.wavfile.read after repair
  });

  it('turns into RF64 in place past the size limit, readable by scipy.io.wavfile and by our reader', async () => {
    const path = join(dir, 'big.wav');
    const data = signal(6, 6000);
    // The limit is lowered so the switch happens at 40 kB instead of 4 GiB; the code path is the same.
    const w = new WavWriter(path, meta, { bufferFrames: 700, durable: false, rf64Above: 40_000 });
    appendInPieces(w, data, 0, 2000);
    w.flush();
    expect(w.isRf64).toBe(false);
    appendInPieces(w, data, 2000, 6000);
    w.close();
    expect(w.isRf64).toBe(true);
    expect(readFileSync(path).subarray(0, 4).toString('latin1')).toBe('RF64');
    const got = await scipyRead(path); // scipy.io.wavfile.read reads RF64 via its ds64 chunk
    expect(got.frames).toBe(6000);
    expect(countMismatches(got.samples, data, 6000)).toBe(0);
    const ours = await readWavFile(path);
    expect(ours.info.container).toBe('RF64');
    expect(ours.data[0][5999]).toBe(Math.fround(data[0][5999]));
  });

  it('names the file and the fix when the disk is full or the folder is missing', () => {
    // /dev/full answers every write with ENOSPC (Linux null-device family, common practice for this test).
    expect(() => new WavWriter('/dev/full', meta)).toThrow(
      /cannot write \/dev\/full: the disk is full; free some space/,
    );
    expect(() => new WavWriter(join(dir, 'no/such/dir/x.wav'), meta)).toThrow(
      /no such file or folder; check the path and create the folder/,
    );
    // EACCES cannot be provoked as root; the mapping from POSIX errno names is checked directly.
    const e = Object.assign(new Error('denied'), { code: 'EACCES' });
    expect(wavIoError(e, '/srv/x.wav', 'create').message).toMatch(
      /\/srv\/x\.wav: no permission; choose a folder you can write/,
    );
  });

  it('takes Float32Array channels (a capture ring) as well, stored bit for bit', async () => {
    const path = join(dir, 'ring.wav');
    const data = signal(8, 3000).map((d) => Float32Array.from(d));
    const w = new WavWriter(path, meta, { bufferFrames: 1024, durable: false });
    w.append(data, 1000);
    w.append(data, 2000, 1000);
    w.close();
    const got = await scipyRead(path); // scipy.io.wavfile.read
    let bad = 0;
    for (let i = 0; i < 3000; i++) for (let c = 0; c < 3; c++) if (got.samples[i * 3 + c] !== data[c][i]) bad++;
    expect(got.frames).toBe(3000);
    expect(bad).toBe(0);
  });

  it('refuses appends with the wrong channel count or after close', () => {
    const w = new WavWriter(join(dir, 'misuse.wav'), meta, { durable: false });
    expect(() => w.append(signal(7, 10, 2), 10)).toThrow(/got 2 channel arrays, the file has 3/);
    expect(() => w.append(signal(7, 10), 10, 5)).toThrow(/channel 0 has 10 samples, fewer than start 5 \+ frames 10/);
    w.close();
    expect(() => w.append(signal(7, 10), 10)).toThrow(/after close/);
  });
});
