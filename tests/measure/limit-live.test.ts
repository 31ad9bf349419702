// The live limit rule end to end: `floorline replay --mask FILE` on a recording where a line appears at 15 s raises
// one `limit` alarm after that, at the line's frequency with a negative margin, in an incident; nothing before.
// The recording is numpy noise at a known density (scipy.io.wavfile.write); the mask lies 6 dB above that floor.
import { readFileSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { Python, tempDir } from '../wav/support.ts';
import { runCli } from '../analyze/support.ts';

let py: Python;
let dir: string;

// numpy.random.default_rng(31): white noise of 1 µFS rms at 8 kS/s (density √(2/fs)·σ = 15.8 nFS/√Hz) for 30 s,
// and from t = 15 s a 777.7 Hz line of 0.5 µFS rms.
const WRITE = String.raw`
rng = np.random.default_rng(31)
fs = 8000; n = 30 * fs; t = np.arange(n) / fs
x = 1e-6 * rng.standard_normal(n)
x[15 * fs:] += 0.5e-6 * np.sqrt(2) * np.sin(2 * np.pi * 777.7 * t[15 * fs:])
wavfile.write(args[0], fs, x.astype(np.float32))
result = float(1e-6 * np.sqrt(2 / fs))
`;

beforeAll(() => {
  py = new Python();
  dir = tempDir('measure-limit-live');
});
afterAll(() => py.close());

describe('replay --mask (live limit rule)', () => {
  it('raises one limit alarm after the line appears, at its frequency, with a negative margin and an incident', async () => {
    const wav = join(dir, 'rig.wav');
    const density = await py.run<number>(WRITE, wav);
    writeFileSync(join(dir, 'spec.csv'), `frequency,limit\n20,${2 * density}\n3900,${2 * density}\n`);
    const events = join(dir, 'events.jsonl');
    const r = runCli(
      'replay',
      wav,
      '--speed',
      'max',
      '--no-server',
      '--quiet',
      '--mask',
      join(dir, 'spec.csv'),
      '--events-out',
      events,
      '--data',
      join(dir, 'data'),
    );
    expect(r.status, r.stderr).toBe(0);
    const limit = readFileSync(events, 'utf8')
      .trimEnd()
      .split('\n')
      .map((l) => JSON.parse(l))
      .filter((e) => e.rule === 'limit');
    const raised = limit.filter((e) => e.state === 'raised');
    expect(raised.length).toBe(1);
    const e = raised[0];
    expect(e.channel).toBe('ch0');
    expect(e.t).toBeGreaterThanOrEqual(15);
    expect(e.t).toBeLessThan(18);
    expect(Math.abs(e.frequency - 777.7)).toBeLessThan(8000 / 4096);
    expect(e.marginDb).toBeLessThan(0);
    expect(e.levelDb).toBeGreaterThan(e.thresholdDb);
    expect(typeof e.incident).toBe('string');
    expect(e.detail).toMatch(/ch0 above its limit mask by [0-9.]+ dB at 77[0-9.]+ Hz/);
  });

  it("refuses a mask beyond the stream's Nyquist frequency, naming the file", () => {
    const bad = join(dir, 'wide.csv');
    writeFileSync(bad, 'frequency,limit\n20,1e-7\n6000,1e-7\n');
    const r = runCli(
      'replay',
      join(dir, 'rig.wav'),
      '--speed',
      'max',
      '--no-server',
      '--quiet',
      '--mask',
      bad,
      '--data',
      join(dir, 'data2'),
    );
    expect(r.status).toBe(2);
    expect(r.stderr).toMatch(/wide\.csv: its last point at 6000 Hz is beyond the Nyquist frequency 4000 Hz/);
  });
});
