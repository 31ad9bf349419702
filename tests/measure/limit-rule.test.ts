// The live `limit` rule (agent/rules/limit-detector.ts) on spectra from scipy.signal.welch: noise whose true density
// sits exactly on the mask never raises (the statistical bound, where a plain "estimate above the mask" trips on
// nearly every spectrum); a line above the mask raises after the on-delay with the frequency and margin numpy finds
// at the worst bin, and clears when it goes.
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { maskOnBins } from '../../dsp/measure/limit-mask.ts';
import { chi2MeanUpperQuantile } from '../../dsp/detection/threshold.ts';
import type { FloorlineEvent } from '../../protocol/events.ts';
import { LimitDetector } from '../../agent/rules/limit-detector.ts';
import { defaultRules } from '../../agent/rules/rules.ts';
import { Python } from '../wav/support.ts';

const RATE = 8000;
const N = 1024;
const DENSITY = 20e-9; // V/√Hz, white

let py: Python;
let spectra: { f: number[]; quiet: number[][]; line: number[][]; k: number };

// numpy.random.default_rng(17): 40 quiet records and 10 with a 1000.3 Hz line of 0.5 µV rms, each 16384 samples of
// white noise at 20 nV/√Hz (σ = D·√(fs/2)); scipy.signal.welch(nperseg=1024) of each (31 segments, K_eq from the
// Welch 1967 formula in numpy).
const MAKE = String.raw`
rng = np.random.default_rng(17)
fs, n, N, D = 8000, 16384, 1024, 20e-9
t = np.arange(n) / fs
def rec(line):
    x = D * np.sqrt(fs / 2) * rng.standard_normal(n)
    if line: x = x + 0.5e-6 * np.sqrt(2) * np.sin(2 * np.pi * 1000.3 * t + rng.uniform(0, 6.28))
    return signal.welch(x, fs=fs, nperseg=N)
f = rec(False)[0]
w = signal.get_window("hann", N); step = N // 2
K = (n - N) // step + 1
rho = (np.sum(w[:N - step] * w[step:]) ** 2) / np.sum(w ** 2) ** 2
keq = K / (1 + 2 * (1 - 1 / K) * rho)
result = {"f": f.tolist(), "quiet": [rec(False)[1].tolist() for _ in range(40)], "line": [rec(True)[1].tolist() for _ in range(10)], "k": float(keq)}
`;

beforeAll(async () => {
  py = new Python();
  spectra = await py.run(MAKE);
});
afterAll(() => py.close());

function detector(): LimitDetector {
  const f = Float64Array.from(spectra.f);
  // The mask: the true density itself from 20 Hz to 3.9 kHz.
  const limits = maskOnBins(
    { frequency: Float64Array.from([20, 3900]), limit: Float64Array.from([DENSITY, DENSITY]) },
    f,
  );
  return new LimitDetector('bridge', 'V', f, limits, defaultRules(), RATE);
}

describe('live limit rule', () => {
  it('stays quiet on noise lying on the mask, where the estimate exceeds the mask in most spectra', () => {
    const d = detector();
    const out: FloorlineEvent[] = [];
    let exceeded = 0;
    spectra.quiet.forEach((p, i) => {
      d.onSpectrum(Float64Array.from(p), spectra.k, (i + 1) * 2048, '2026-01-01T00:00:00Z', out);
      if (d.levelDb > 0) exceeded++;
    });
    expect(exceeded).toBeGreaterThan(35); // the worst of ~480 χ² bins lies above its mean nearly always
    expect(out).toEqual([]);
    // The bound: χ²(ν)/ν upper quantile at α/bins (scipy.stats.chi2.ppf gives the same to 1e-9; from the spur rule).
    expect(d.thresholdDb).toBeCloseTo(
      10 * Math.log10(chi2MeanUpperQuantile(1e-6 / 482, (2 * Math.floor(spectra.k * 100)) / 100)),
      1,
    );
  });

  it('raises on a line over the mask with the worst bin numpy finds, and clears when the line goes', () => {
    const d = detector();
    const out: FloorlineEvent[] = [];
    const step = 2048; // one spectrum every 0.256 s of sample time
    let sample = 0;
    for (const p of spectra.quiet.slice(0, 5))
      d.onSpectrum(Float64Array.from(p), spectra.k, (sample += step), 'w', out);
    expect(out).toEqual([]);
    for (const p of spectra.line) d.onSpectrum(Float64Array.from(p), spectra.k, (sample += step), 'w', out);
    const raised = out.filter((e) => e.state === 'raised');
    expect(raised.length).toBe(1);
    const e = raised[0];
    expect(e.rule).toBe('limit');
    // On-delay 0.5 s (the band rule's): raised at the third line spectrum (0.512 s after the first).
    expect(e.sample).toBe(5 * step + 3 * step);
    // numpy: argmax of psd / limit² over the bins under the mask, margin −10·log10 of it, for that spectrum.
    const p = spectra.line[2];
    let best = 0;
    for (let k = 1; k < p.length; k++) if (spectra.f[k] >= 20 && spectra.f[k] <= 3900 && p[k] > p[best]) best = k;
    expect(e.frequency).toBeCloseTo(spectra.f[best], 6);
    expect(Math.abs(e.frequency! - 1000.3)).toBeLessThan(RATE / N);
    expect(e.marginDb).toBeCloseTo(-10 * Math.log10(p[best] / DENSITY ** 2), 1); // events keep 4 significant digits
    expect(e.marginDb!).toBeLessThan(-10);
    expect(e.detail).toMatch(/bridge above its limit mask by [0-9.]+ dB at 100[0-9.]+ Hz/);
    for (const q of spectra.quiet.slice(5, 25))
      d.onSpectrum(Float64Array.from(q), spectra.k, (sample += step), 'w', out);
    const cleared = out.filter((x) => x.state === 'cleared');
    expect(cleared.length).toBe(1);
    expect(cleared[0].sample - (5 + 10) * step).toBeLessThanOrEqual(Math.ceil((2 * RATE) / step) * step + step); // off-delay 2 s
  });
});
