import { statSync, truncateSync, rmSync } from 'node:fs';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { WavReader } from '../../agent/wav/reader.ts';
import { repairWav } from '../../agent/wav/repair.ts';
import { WavWriter } from '../../agent/wav/writer.ts';
import { Python, tempDir } from './support.ts';

let py: Python;
let dir: string;
beforeAll(() => {
  py = new Python();
  dir = tempDir('rf64');
});
afterAll(() => {
  py.close();
  rmSync(dir, { recursive: true, force: true });
});

describe('repairWav past 4 GiB', () => {
  it('turns a crashed recording of more than 4 GiB into RF64 that scipy.io.wavfile reads', async () => {
    const path = join(dir, 'long.wav');
    const w = new WavWriter(
      path,
      {
        sampleRate: 100000,
        channels: [
          { name: 'ch0', unit: 'V' },
          { name: 'ch1', unit: 'V' },
        ],
        firstSample: 0,
      },
      { durable: false },
    );
    w.append([Float64Array.of(0.25, -0.5), Float64Array.of(1, 2)], 2);
    w.close();
    // Simulate a recorder killed after 4.5 GiB of samples: the tail is a sparse hole (zeros), the header says 2 frames.
    const dataOffset = statSync(path).size - 16;
    const frames = Math.floor((4.5 * 2 ** 30) / 8);
    truncateSync(path, dataOffset + frames * 8 + 3); // and 3 bytes of a torn frame
    const result = await repairWav(path);
    expect(result).toMatchObject({ container: 'RF64', frames, declaredBefore: 16, droppedBytes: 3, changed: true });
    // Reference: scipy.io.wavfile.read(mmap=True) reads RF64 through its ds64 chunk without loading the samples.
    const ref = await py.run<{ shape: number[]; head: number[]; tail: number[] }>(
      `r, d = wavfile.read(args[0], mmap=True)
result = {"shape": list(d.shape), "head": d[:2].ravel().tolist(), "tail": d[-1].tolist()}`,
      path,
    );
    expect(ref.shape).toEqual([frames, 2]);
    expect(ref.head).toEqual([0.25, 1, -0.5, 2]);
    expect(ref.tail).toEqual([0, 0]);
    const r = await WavReader.open(path, { blockFrames: 4 });
    try {
      expect(r.info.container).toBe('RF64');
      expect(r.info.frames).toBe(frames);
      r.seek(frames - 4);
      const last = await r.read();
      expect(last?.firstSample).toBe(frames - 4);
      expect(Array.from(last!.data[1])).toEqual([0, 0, 0, 0]);
    } finally {
      await r.close();
    }
  });
});
