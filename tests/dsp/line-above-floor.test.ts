// Floor-subtracted line amplitudes (dsp/tone.ts lineAboveFloor), on numpy's noise and tones through
// scipy.signal.welch: a tone reads its RMS, bare noise reads near zero rather than its lobe's share of the floor.
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { RunningMedian } from '../../dsp/detection/running-median.ts';
import { chi2MeanMedian } from '../../dsp/detection/threshold.ts';
import { lineAboveFloor, peakBin, toneAt } from '../../dsp/tone.ts';
import { Python } from '../wav/support.ts';

const FS = 8000;
const N = 4096;
const BIN = FS / N;
const LOBE = 2; // Hann main-lobe half-width, bins
let py: Python;

beforeAll(() => {
  py = new Python();
});
afterAll(() => py.close());

/** scipy.signal.welch of 60 s of numpy white noise (density `e`), plus a tone of RMS `a` at `f0`; its K. */
async function welch(e: number, a: number, f0: number, seed: number): Promise<{ psd: Float64Array; segments: number }> {
  const r = await py.run<{ psd: number[]; segments: number }>(
    `fs, n, e, a, f0, seed = args
rng = np.random.default_rng(seed)
t = np.arange(60 * fs) / fs
x = e * np.sqrt(fs / 2) * rng.standard_normal(t.size) + a * np.sqrt(2) * np.sin(2 * np.pi * f0 * t + 0.3)
f, p = signal.welch(x, fs=fs, nperseg=n, noverlap=n // 2, window='hann', detrend='constant')
result = {"psd": p.tolist(), "segments": int((x.size - n) // (n // 2) + 1)}`,
    FS,
    N,
    e,
    a,
    f0,
    seed,
  );
  return { psd: Float64Array.from(r.psd), segments: r.segments };
}

/** The local floor as the spur rule takes it: median of ±8 bins, over chi2MeanMedian(2K) (K ≈ segments / 1.06, Hann 50 %). */
function floorAt(psd: Float64Array, k: number, segments: number): number {
  return new RunningMedian(psd.length, 8).at(psd, k) / chi2MeanMedian((2 * segments) / 1.056);
}

describe('line amplitude with the local floor taken off', () => {
  it('reads a 0.6 µV rms tone on 40 nV/√Hz within 1 % wherever it falls between bins (scipy.signal.welch density)', async () => {
    for (const d of [0, 0.25, 0.5]) {
      const f0 = (1000 + d) * BIN;
      const { psd, segments } = await welch(40e-9, 0.6e-6, f0, 3);
      const k = peakBin(psd, 990, 1010);
      const line = lineAboveFloor(psd, BIN, LOBE, k, floorAt(psd, k, segments));
      // The tone's RMS is its amplitude/√2 (common practice); the density's lobe integrates to it (Heinzel 2002 §10).
      expect(Math.abs(line.rms / 0.6e-6 - 1), `offset ${d} bin`).toBeLessThan(0.01);
      expect(Math.abs(line.frequency - f0)).toBeLessThan(0.05 * BIN);
    }
  });

  it('reads a weak 0.2 µV line on 40 nV/√Hz within 0.5 dB, where the plain lobe sum reads its floor share too', async () => {
    const { psd, segments } = await welch(40e-9, 0.2e-6, 200.3, 4);
    const k = peakBin(psd, 95, 110);
    const line = lineAboveFloor(psd, BIN, LOBE, k, floorAt(psd, k, segments));
    expect(Math.abs(20 * Math.log10(line.rms / 0.2e-6))).toBeLessThan(0.5);
    // The plain lobe sum adds the floor in 5 bins: √(0.2² µV² + 5·Δf·(40 nV)²) (density scaling, scipy convention).
    const plain = toneAt(psd, BIN, LOBE, k).rms;
    expect(Math.abs(plain / Math.sqrt(0.2e-6 ** 2 + 5 * BIN * 40e-9 ** 2) - 1)).toBeLessThan(0.03);
  });

  it('reads bare 20 nV/√Hz noise under 25 nV at its worst, not the ~62 nV the lobe sum gives', async () => {
    const { psd, segments } = await welch(20e-9, 0, 0, 5);
    let worst = 0;
    for (let c = 200; c < 1800; c += 97) {
      const k = peakBin(psd, c - LOBE, c + LOBE);
      worst = Math.max(worst, lineAboveFloor(psd, BIN, LOBE, k, floorAt(psd, k, segments)).rms);
      // √(5·Δf)·e = 62.5 nV: the lobe's share of a white floor (density scaling).
      expect(Math.abs(toneAt(psd, BIN, LOBE, k).rms / (Math.sqrt(5 * BIN) * 20e-9) - 1)).toBeLessThan(0.1);
    }
    // What is left is the scatter of 5 averaged bins about the floor: K ≈ 220 averages give each bin σ ≈ e²/√K, the
    // lobe sum σ ≈ 2.3·e²/√K (correlated Hann bins), i.e. √(σ·Δf) ≈ 12 nV at 1σ; the worst of 17 looks is ~2σ.
    expect(worst).toBeLessThan(25e-9);
  });
});
