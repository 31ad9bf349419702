// analyze --threads N: the per-channel estimates run on worker threads and the report is byte-identical to
// --threads 1, for mean and median averaging and for more channels than workers; the PSDs equal
// scipy.signal.welch on scipy.io.wavfile.read's samples.
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { Python, tempDir } from '../wav/support.ts';
import { join } from 'node:path';
import { psdMismatch, runCli, welchReference } from './support.ts';

const root = new URL('../../', import.meta.url).pathname;

let py: Python;
let dir: string;

// 5 channels of numpy.random.default_rng(15) noise with a different line on each, float32, written by
// scipy.io.wavfile.write: 5 channels over 2 or 3 workers leaves one worker with more channels than another.
const WRITE = String.raw`
d = args[0]
rng = np.random.default_rng(15)
n = 300000; t = np.arange(n) / 50000.0
x = np.stack([(c + 1) * 1e-6 * rng.standard_normal(n) + 1e-5 * np.sin(2 * np.pi * (1000 + 937 * c) * t) for c in range(5)], axis=1)
wavfile.write(d + "/five.wav", 50000, x.astype(np.float32))
result = True
`;

beforeAll(async () => {
  py = new Python();
  dir = tempDir('analyze-threads');
  await py.run(WRITE, dir);
});
afterAll(() => py.close());

function analyze(...args: string[]): string {
  const r = runCli('analyze', `${dir}/five.wav`, '--json', '--segment', '4096', ...args);
  expect(r.stderr).toBe('');
  expect(r.status).toBe(0);
  return r.stdout;
}

describe('analyze --threads', () => {
  it('gives the same report, byte for byte, on 1, 2 and 3 threads; equal to scipy.signal.welch', async () => {
    const one = analyze('--threads', '1');
    expect(analyze('--threads', '2')).toBe(one);
    expect(analyze('--threads', '3')).toBe(one);
    const report = JSON.parse(one) as { channels: { psd: number[] }[] };
    // Source: scipy.signal.welch(hann, nperseg=4096, noverlap=2048, detrend='constant') of wavfile.read's samples.
    const ref = await welchReference(py, `${dir}/five.wav`, {
      segment: 4096,
      scipyWindow: 'hann',
      overlap: 0.5,
      detrend: 'constant',
      bands: [],
    });
    for (let c = 0; c < 5; c++) {
      const m = psdMismatch(report.channels[c].psd, ref.psd[c]);
      expect(m.bad).toBe(0);
      expect(m.worst).toBeLessThan(1e-9);
    }
  }, 60_000);

  it('gives the same median-averaged report on 1 and 2 threads', () => {
    expect(analyze('--threads', '2', '--average', 'median')).toBe(analyze('--threads', '1', '--average', 'median'));
  }, 60_000);

  it('gives the same text report, byte for byte, on 1 and 2 threads', () => {
    const text = (threads: string): string => {
      const r = runCli('analyze', `${dir}/five.wav`, '--segment', '4096', '--threads', threads);
      expect(r.stderr).toBe('');
      expect(r.status).toBe(0);
      return r.stdout;
    };
    const one = text('1');
    expect(one.length).toBeGreaterThan(0);
    expect(text('2')).toBe(one);
  }, 60_000);

  it('gives the same JSON and text reports on 1 and 2 threads for the demo recording', () => {
    const demo = join(root, 'recordings/demo.wav');
    const report = (...args: string[]): string => {
      const r = runCli('analyze', demo, ...args);
      expect(r.status).toBe(0);
      // The demo's scripted overload clips the bridge channel (recordings/demo-scenario.json): the warning on
      // stderr is part of the output and must match too.
      return `${r.stdout}\n--- stderr ---\n${r.stderr}`;
    };
    const json = report('--json', '--threads', '1');
    // The demo holds 2 channels (recordings/README.md): both must be in the report, not an empty one.
    expect((JSON.parse(json.split('\n--- stderr ---\n')[0]) as { channels: unknown[] }).channels).toHaveLength(2);
    expect(report('--json', '--threads', '2')).toBe(json);
    expect(report('--threads', '2')).toBe(report('--threads', '1'));
  }, 60_000);

  it('refuses --threads 0 naming the range', () => {
    const r = runCli('analyze', `${dir}/five.wav`, '--threads', '0');
    expect(r.status).toBe(2);
    expect(r.stderr).toMatch(/--threads/);
  });
});
