// The recent estimate recovered from the long average's snapshots equals, to rounding, numpy's weighted mean of the
// newest segments' own periodograms (scipy.signal.welch over each single segment), for exponential and mean averaging.
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { RecentSpectrum, weightedEquivalent } from '../../dsp/detection/recent-spectrum.ts';
import { overlapRho, WelchEstimator } from '../../dsp/welch.ts';
import { makeWindow } from '../../dsp/windows.ts';
import type { AveragingSpec } from '../../dsp/averaging.ts';
import { Python, hexToFloat64 } from '../wav/support.ts';

const FS = 1000;
const N = 256;
const STEP = 128;
const M = 9;
let py: Python;
let samples: Float64Array;

beforeAll(async () => {
  py = new Python();
  // numpy noise whose level steps up 4× in power half way, so the recent window and the long average differ.
  const hex = await py.run<string>(`rng = np.random.default_rng(11)
x = rng.standard_normal(40 * 128 + 128)
x[2600:] *= 2
result = x.astype('<f8').tobytes().hex()`);
  samples = hexToFloat64(hex);
});
afterAll(() => py.close());

async function numpyRecent(last: number, m: number, r: number): Promise<Float64Array> {
  // Segment j starts at j·STEP; its own periodogram is scipy.signal.welch over exactly that segment. Weights r^age.
  const hex = await py.run<string>(
    `x = np.frombuffer(bytes.fromhex(args[0]), dtype='<f8')
last, m, r, n, step, fs = args[1:]
rows = [signal.welch(x[j * step:j * step + n], fs=fs, nperseg=n, noverlap=0, window='hann', detrend='constant')[1] for j in range(last - m + 1, last + 1)]
w = np.array([r ** (m - 1 - i) for i in range(m)])
result = (np.tensordot(w, np.array(rows), 1) / w.sum()).astype('<f8').tobytes().hex()`,
    Buffer.from(samples.buffer, samples.byteOffset, samples.byteLength).toString('hex'),
    last,
    m,
    r,
    N,
    STEP,
    FS,
  );
  return hexToFloat64(hex);
}

/** `snapshotEvery` 0: one snapshot per new segment, some with two; N: a snapshot every N segments (a fast rate). */
function run(
  averaging: AveragingSpec,
  snapshotEvery = 0,
): { recent: RecentSpectrum; segments: number; kept: number; newest: number } {
  const est = new WelchEstimator({
    sampleRate: FS,
    segment: N,
    window: 'hann',
    overlap: 0.5,
    detrend: 'mean',
    averaging,
  });
  const win = makeWindow('hann', N);
  const recent = new RecentSpectrum({
    bins: N / 2 + 1,
    averaging,
    segment: N,
    step: STEP,
    sampleRate: FS,
    windowSegments: M,
    rho: overlapRho(win.values, STEP),
  });
  // One snapshot per new segment, and some with two new segments (as a slow snapshot rate gives).
  let kept = 0;
  let newest = -1;
  for (let pos = 0; pos + STEP <= samples.length; pos += STEP) {
    est.push(samples, pos, pos + STEP);
    const due = snapshotEvery ? (pos / STEP) % snapshotEvery === 0 : (pos / STEP) % 5 !== 3;
    if (due) {
      recent.push(est.psd(), est.segmentsUsed);
      newest = est.segmentsUsed - 1;
    }
    kept = Math.max(kept, recent.keptSnapshots);
  }
  return { recent, segments: est.segmentsTotal, kept, newest };
}

describe('recent estimate from the long average', () => {
  it('exponential (τ = 2 s): the newest 9 segments weighted (1 − α)^age, as numpy computes them', async () => {
    const tau = 2;
    const { recent, segments } = run({ mode: 'exponential', tauSeconds: tau });
    expect(recent.segments).toBe(M);
    const r = Math.exp(-STEP / FS / tau); // 1 − α, α = 1 − exp(−hop/τ) (first-order recursion, common practice)
    const ref = await numpyRecent(segments - 1, M, r);
    let worst = 0;
    for (let k = 0; k < ref.length; k++) worst = Math.max(worst, Math.abs(recent.psd[k] - ref[k]) / ref[k]);
    expect(worst).toBeLessThan(1e-9);
  });

  it('mean: the newest 9 segments with equal weights', async () => {
    const { recent, segments } = run({ mode: 'mean' });
    const ref = await numpyRecent(segments - 1, M, 1);
    let worst = 0;
    for (let k = 0; k < ref.length; k++) worst = Math.max(worst, Math.abs(recent.psd[k] - ref[k]) / ref[k]);
    expect(worst).toBeLessThan(1e-9);
  });

  it('with 4 new segments per snapshot: the same newest segments as numpy, holding only the snapshots the window spans', async () => {
    // Snapshots at 0, 4, 8, … segments: the window of the newest 9 ends at a snapshot 8 or more segments back.
    const tau = 2;
    const { recent, kept, newest } = run({ mode: 'exponential', tauSeconds: tau }, 4);
    const m = recent.segments;
    expect(m).toBeGreaterThanOrEqual(M); // whole snapshots: at least the window, at most 4 − 1 segments more
    expect(m).toBeLessThan(M + 4);
    const ref = await numpyRecent(newest, m, Math.exp(-STEP / FS / tau));
    let worst = 0;
    for (let k = 0; k < ref.length; k++) worst = Math.max(worst, Math.abs(recent.psd[k] - ref[k]) / ref[k]);
    expect(worst).toBeLessThan(1e-9);
    // A window of 9 segments spans at most ⌈9 / 4⌉ + 1 = 4 earlier snapshots (not one slot per segment).
    expect(kept).toBeLessThanOrEqual(4);
    expect(kept).toBeGreaterThanOrEqual(3);
  });

  it('counts equivalent averages as Welch does for equal weights: K / (1 + 2 Σ (1 − j/K) ρ_j)', async () => {
    const win = makeWindow('hann', N);
    const rho = overlapRho(win.values, STEP);
    // Hann at 50 % overlap: ρ(N/2) = 0.1667² = 0.0278 (Heinzel 2002 table), the only non-zero lag.
    expect(rho[0]).toBeCloseTo(1 / 36, 4);
    for (const k of [1, 2, 9, 40])
      expect(weightedEquivalent(k, 1, rho)).toBeCloseTo(k / (1 + 2 * (1 - 1 / k) * (1 / 36)), 3);
  });
});
