import { describe, expect, it } from 'vitest';
import { SeededRandom } from '../../dsp/random.ts';
import { planFromPoints, planLogFrequencies } from '../../dsp/logfreq/plan.ts';
import { logFrequencyPsd } from '../../dsp/logfreq/log-frequency-psd.ts';
import { runPython, type PyValue } from './python.ts';

/** P(X > k) for X ~ Binomial(n, p): scipy.stats.binom.sf. */
function binomialTail(k: number, n: number, p: number): number {
  return runPython<{ sf: number }>(
    `from scipy.stats import binom\nout['sf'] = float(binom.sf(inp['k'], inp['n'], inp['p']))`,
    { k, n, p },
  ).sf;
}

function gaussian(n: number, sigma: number, seed: number): Float64Array {
  return new SeededRandom(seed).fillGaussian(new Float64Array(n), sigma);
}

function maxRelError(a: Float64Array, b: Float64Array): number {
  let worst = 0;
  for (let i = 0; i < a.length; i++) worst = Math.max(worst, Math.abs(a[i] - b[i]) / Math.abs(b[i]));
  return worst;
}

/** Two-sided 99 % bounds of Ŝ/S for ν degrees of freedom: χ²_ν quantiles / ν (scipy.stats.chi2.ppf). */
function chiSquareBounds99(nu: number[]): { lo: Float64Array; hi: Float64Array } {
  return runPython(
    `
from scipy.stats import chi2
nu = np.array(inp['nu'])
out['lo'] = chi2.ppf(0.005, nu) / nu
out['hi'] = chi2.ppf(0.995, nu) / nu
`,
    { nu },
  );
}

describe('logFrequencyPsd', () => {
  it('equals scipy.signal.welch at points placed on Welch bins with the same segment, window and overlap', () => {
    const fs = 2000;
    const x = gaussian(40_000, 0.3, 11);
    for (let i = 0; i < x.length; i++) x[i] += 0.05 + 1e-6 * i + 0.2 * Math.sin(0.013 * i); // offset, drift, a line
    const cases = [
      { window: 'hann', scipyWindow: 'hann', detrend: 'mean', scipyDetrend: 'constant', overlap: 0.5 },
      { window: 'hann', scipyWindow: 'hann', detrend: 'linear', scipyDetrend: 'linear', overlap: 0.75 },
      {
        window: 'blackman-harris',
        scipyWindow: 'blackmanharris',
        detrend: 'none',
        scipyDetrend: false,
        overlap: 0.661,
      },
    ] as const;
    const segments = [256, 1024, 4096];
    const ours: Float64Array[] = [];
    const jobs: PyValue[] = [];
    for (const c of cases) {
      const f: number[] = [];
      const seg: number[] = [];
      const bins: number[] = [];
      for (const L of segments) {
        // Interior bins, and for L = 256 the Nyquist bin, which scipy does not double.
        for (const k of L === 256 ? [1, 3, 17, 128] : [2, 9, 100, L / 2 - 1]) {
          f.push((k * fs) / L);
          seg.push(L);
          bins.push(k);
        }
      }
      const plan = planFromPoints({ sampleRate: fs, samples: x.length, window: c.window, overlap: c.overlap }, f, seg);
      ours.push(logFrequencyPsd(x, plan, { detrend: c.detrend }).psd);
      jobs.push({ seg, bins, win: c.scipyWindow, ov: c.overlap, det: c.scipyDetrend });
    }
    // Reference: scipy.signal.welch(x, fs, window, nperseg=L, noverlap=floor(overlap·L), detrend, density).
    const ref = runPython<{ psd: Float64Array[] }>(
      `
from scipy.signal import welch
out['psd'] = []
for job in inp['jobs']:
    psd = []
    for L, k in zip(job['seg'], job['bins']):
        L = int(L); k = int(k)
        _, p = welch(inp['x'], fs=inp['fs'], window=job['win'], nperseg=L,
                     noverlap=int(np.floor(job['ov'] * L)), detrend=job['det'], scaling='density')
        psd.append(p[k])
    out['psd'].append(np.array(psd))
`,
      { x, fs, jobs },
    );
    for (let i = 0; i < cases.length; i++) expect(maxRelError(ours[i], ref.psd[i])).toBeLessThan(1e-9);
  });

  it('equals a direct numpy evaluation at the non-integer bins of a log-spaced plan', () => {
    const fs = 1000;
    const x = gaussian(60_000, 1, 5);
    const plan = planLogFrequencies({ sampleRate: fs, samples: x.length, minFrequency: 0.2, points: 60, averages: 20 });
    const ours = logFrequencyPsd(x, plan, { detrend: 'mean' });
    // Independent reference: numpy sums over every segment with the exact complex exponential
    // (no recurrence) and scipy.signal.get_window('hann', L) (periodic), mean removed per segment.
    const ref = runPython<{ psd: Float64Array; segs: Float64Array }>(
      `
from scipy.signal import get_window
x = inp['x']; fs = inp['fs']; psd = []; segs = []
for f, L, D, K in zip(inp['f'], inp['L'], inp['D'], inp['K']):
    L = int(L); D = int(D); K = int(K)
    w = get_window('hann', L)
    n = np.arange(L)
    kern = w * np.exp(-2j * np.pi * f * n / fs)
    idx = np.arange(K)[:, None] * D + n[None, :]
    seg = x[idx]
    seg = seg - seg.mean(axis=1, keepdims=True)
    X = seg @ kern
    psd.append(2 * np.mean(np.abs(X) ** 2) / (fs * np.sum(w * w)))
out['psd'] = np.array(psd)
`,
      {
        x,
        fs,
        f: Array.from(plan.frequency),
        L: Array.from(plan.segment),
        D: Array.from(plan.step),
        K: Array.from(plan.averages),
      },
    );
    expect(maxRelError(ours.psd, ref.psd)).toBeLessThan(1e-9);
  });

  it('finds the white-noise density 2σ²/fs within the chi-square bounds of its reported averages', () => {
    const fs = 1000;
    const sigma = 0.7;
    const x = gaussian(1 << 18, sigma, 2024);
    const plan = planLogFrequencies({ sampleRate: fs, samples: x.length, points: 120, averages: 50 });
    const est = logFrequencyPsd(x, plan);
    const truth = (2 * sigma * sigma) / fs; // one-sided density of white noise (common practice)
    const nu = Array.from(est.equivalentAverages, (k) => 2 * k);
    // Bounds: ν·Ŝ/S ~ χ²_ν with ν = 2·K_eq (Welch 1967; Percival & Walden 1993, equivalent degrees of
    // freedom), quantiles from scipy.stats.chi2.ppf.
    const q = chiSquareBounds99(nu);
    let outside = 0;
    let weighted = 0;
    let weights = 0;
    for (let j = 0; j < est.psd.length; j++) {
      const ratio = est.psd[j] / truth;
      if (ratio < q.lo[j] || ratio > q.hi[j]) outside++;
      weighted += nu[j] * ratio;
      weights += nu[j];
    }
    // Points at 1 % each: more than 4 outside must be unlikely for independent points (binomial tail, computed
    // here with scipy.stats.binom.sf for the number of points the plan gave).
    expect(est.psd.length).toBeGreaterThan(80);
    expect(binomialTail(4, est.psd.length, 0.01)).toBeLessThan(0.01);
    expect(outside).toBeLessThanOrEqual(4);
    // The ν-weighted mean ratio has variance 2/Σν: allow 4 standard deviations.
    expect(Math.abs(weighted / weights - 1)).toBeLessThan(4 * Math.sqrt(2 / weights));
    // Per point the reported resolution bandwidth is Hann's ENBW 1.5·fs/L (Heinzel 2002, table for Hanning).
    for (let j = 0; j < est.psd.length; j++) expect(est.rbwHz[j]).toBeCloseTo((1.5 * fs) / est.segment[j], 10);
  });

  it('follows a generated 1/f + white model within its confidence interval', () => {
    const fs = 100;
    const n = 1 << 20;
    const corner = 1.0;
    const sigma = 1;
    // 1/f + white by FFT shaping of seeded Gaussian noise with numpy: one-sided density 2σ²/fs·(1 + fc/f).
    const gen = runPython<{ x: Float64Array }>(
      `
rng = np.random.default_rng(77)
n = int(inp['n']); fs = inp['fs']
X = np.fft.rfft(rng.standard_normal(n) * inp['sigma'])
f = np.fft.rfftfreq(n, 1 / fs)
shape = np.zeros_like(f); shape[1:] = np.sqrt(1 + inp['fc'] / f[1:])
out['x'] = np.fft.irfft(X * shape, n)
`,
      { n, fs, sigma, fc: corner },
    );
    const plan = planLogFrequencies({ sampleRate: fs, samples: n, minFrequency: 0.002, points: 150, averages: 40 });
    const est = logFrequencyPsd(gen.x, plan);
    const ew2 = (2 * sigma * sigma) / fs;
    const nu = Array.from(est.equivalentAverages, (k) => 2 * k);
    const q = chiSquareBounds99(nu);
    let outside = 0;
    let below = 0;
    let belowW = 0;
    for (let j = 0; j < est.psd.length; j++) {
      const model = ew2 * (1 + corner / est.frequency[j]);
      const ratio = est.psd[j] / model;
      if (ratio < q.lo[j] || ratio > q.hi[j]) outside++;
      if (est.frequency[j] < corner / 10) {
        below += nu[j] * ratio;
        belowW += nu[j];
      }
    }
    // More than 5 of the points outside their 99 % bounds must be unlikely (scipy.stats.binom.sf, computed here).
    expect(binomialTail(5, est.psd.length, 0.01)).toBeLessThan(0.01);
    expect(outside).toBeLessThanOrEqual(5);
    // The 1/f part alone (a decade below the corner) on average on the model within 4 standard deviations.
    expect(belowW).toBeGreaterThan(0);
    expect(Math.abs(below / belowW - 1)).toBeLessThan(4 * Math.sqrt(2 / belowW));
  });

  it('keeps its digits under a DC offset 10^7 times the noise, as scipy.signal.welch does', () => {
    const fs = 1000;
    const noise = gaussian(1 << 16, 1e-6, 19);
    const x = Float64Array.from(noise, (v) => v + 10); // 10 V offset, 1 µV noise
    const plan = planFromPoints(
      { sampleRate: fs, samples: x.length },
      [2000 / 4096, 5000 / 4096, (40 * fs) / 4096],
      [4096, 4096, 4096],
    );
    const ours = logFrequencyPsd(x, plan).psd;
    const ref = runPython<{ psd: Float64Array }>(
      `
from scipy.signal import welch
_, p = welch(inp['x'], fs=1000, window='hann', nperseg=4096, noverlap=2048, detrend='constant')
out['psd'] = p[[2, 5, 40]]
`,
      { x },
    );
    // scipy removes each segment's mean before windowing (its rounding on 10 V is ~1e-15 V a sample). Taking the
    // mean out after the sum alone would leave ~6e-8 here; removing the record mean first leaves ~1e-10.
    expect(maxRelError(ours, ref.psd)).toBeLessThan(1e-8);
  });

  it('refuses a record that does not match its plan, naming the fix', () => {
    const plan = planLogFrequencies({ sampleRate: 100, samples: 1000 });
    expect(() => logFrequencyPsd(new Float64Array(999), plan)).toThrow(/plan again for this record/);
  });
});
