// The live cross-spectra: a replay's snapshots carry each pair's coherence and cross-spectral density, averaged
// over the same Welch segments as the densities. With mean averaging the last snapshot holds every segment of
// the file, so it must equal scipy.signal.coherence and scipy.signal.csd on the samples scipy.io.wavfile reads.
import { readFileSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { Python, tempDir } from '../wav/support.ts';
import { runCli } from '../analyze/support.ts';

let py: Python;
let dir: string;

// numpy.random.default_rng(11), 8 kS/s, 64000 frames (80 snapshot intervals; the last of the 30 segments of
// 4096 at 50 % overlap ends before the last snapshot instant): a 50.3 Hz line common to both channels (half size
// on "b") plus each channel's own white noise, and low-passed noise (scipy.signal.lfilter) common to both.
const WRITE = String.raw`
rng = np.random.default_rng(11)
n = 64000
t = np.arange(n) / 8000.0
common = 2e-3 * np.sin(2 * np.pi * 50.3 * t) + signal.lfilter([0.05], [1, -0.95], rng.standard_normal(n)) * 1e-3
x = np.stack([common + 1e-3 * rng.standard_normal(n), 0.5 * common + 1e-3 * rng.standard_normal(n)], axis=1)
wavfile.write(args[0], 8000, x.astype(np.float32))
result = True
`;

const REFERENCE = String.raw`
path, N = args
r, x = wavfile.read(path)
x = x.astype(np.float64)
f, C = signal.coherence(x[:, 0], x[:, 1], fs=r, window="hann", nperseg=N, noverlap=N // 2, detrend="constant")
f, P = signal.csd(x[:, 0], x[:, 1], fs=r, window="hann", nperseg=N, noverlap=N // 2, detrend="constant")
result = {"coherence": C.tolist(), "re": P.real.tolist(), "im": P.imag.tolist(),
          "segments": (x.shape[0] - N) // (N // 2) + 1}
`;

interface SnapshotLine {
  sample: number;
  coherence?: {
    a: string;
    b: string;
    segmentsUsed: number;
    equivalentAverages: number;
    coherence: number[];
    csdRe: number[];
    csdIm: number[];
  }[];
}

/** `floorline replay FILE --speed max` into its own data folder, as a real process. */
function replay(file: string, data: string, ...extra: string[]) {
  const r = runCli('replay', file, '--speed', 'max', '--no-server', '--quiet', '--data', join(dir, data), ...extra);
  expect(r.status, r.stderr).toBe(0);
  return r;
}

function replaySnapshots(file: string, out: string, ...extra: string[]): SnapshotLine[] {
  replay(file, 'data', '--snapshots-out', out, ...extra);
  return readFileSync(out, 'utf8')
    .trim()
    .split('\n')
    .map((l) => JSON.parse(l) as SnapshotLine);
}

beforeAll(async () => {
  py = new Python();
  dir = tempDir('live-coherence');
  await py.run(WRITE, join(dir, 'two.wav'));
});
afterAll(() => py.close());

describe('live coherence', () => {
  it('equals scipy.signal.coherence and scipy.signal.csd at the end of a mean-averaged replay', async () => {
    const snaps = replaySnapshots(join(dir, 'two.wav'), join(dir, 'snap.jsonl'), '--average', 'mean');
    const last = snaps[snaps.length - 1];
    const ref = await py.run<{ coherence: number[]; re: number[]; im: number[]; segments: number }>(
      REFERENCE,
      join(dir, 'two.wav'),
      4096,
    );
    expect(last.coherence).toHaveLength(1);
    const pair = last.coherence![0];
    expect([pair.a, pair.b]).toEqual(['ch0', 'ch1']);
    expect(pair.segmentsUsed).toBe(ref.segments); // the segment count scipy.signal.csd averages: (n − N)/step + 1
    let worstC = 0;
    let worstP = 0;
    for (let k = 0; k < ref.coherence.length; k++) {
      worstC = Math.max(worstC, Math.abs(pair.coherence[k] - ref.coherence[k]) / ref.coherence[k]);
      const mag = Math.hypot(ref.re[k], ref.im[k]);
      worstP = Math.max(worstP, Math.hypot(pair.csdRe[k] - ref.re[k], pair.csdIm[k] - ref.im[k]) / mag);
    }
    expect(worstC).toBeLessThan(1e-9); // scipy.signal.coherence, same window, segment, overlap, detrend
    expect(worstP).toBeLessThan(1e-9); // scipy.signal.csd (complex relative error)
    // The common line is coherent (γ² near 1 at 50.3 Hz, bin 25.76), white noise far above the common low-pass
    // is not: a check that the comparison is not between two vectors of ones.
    expect(pair.coherence[26]).toBeGreaterThan(0.99);
    expect(pair.coherence[1500]).toBeLessThan(0.5);
  }, 120_000);

  it('leaves the densities bit-identical to a run without cross-spectra', () => {
    const rules = join(dir, 'no-pairs.json');
    writeFileSync(rules, JSON.stringify({ coherent: { pairs: [] } }));
    const withPairs = replay(join(dir, 'two.wav'), 'd1');
    const without = replay(join(dir, 'two.wav'), 'd2', '--rules', rules);
    const digest = (s: string) => /digest ([0-9a-f]+)/.exec(s)?.[1];
    expect(digest(withPairs.stdout + withPairs.stderr)).toBeDefined();
    // SHA-256 over every density (agent/pipeline/snapshot-digest.ts): the split pushes change no arithmetic.
    expect(digest(withPairs.stdout + withPairs.stderr)).toBe(digest(without.stdout + without.stderr));
  }, 120_000);
});
