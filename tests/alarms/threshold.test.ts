import { describe, expect, it } from 'vitest';
import {
  bandDegreesOfFreedom,
  binPowerCorrelation,
  chi2MeanUpperQuantile,
  effectiveBins,
  fUpperQuantile,
  riseThresholdDb,
} from '../../dsp/detection/threshold.ts';
import { scipyReference } from './scipy-reference.ts';

function hann(n: number): Float64Array {
  const w = new Float64Array(n);
  for (let i = 0; i < n; i++) w[i] = 0.5 - 0.5 * Math.cos((2 * Math.PI * i) / n);
  return w;
}

describe('threshold statistics', () => {
  it('F and χ² quantiles equal scipy.stats f.ppf and chi2.ppf across the degrees of freedom we meet', () => {
    const fCases: [number, number, number][] = [];
    for (const alpha of [1e-2, 1e-4, 1e-6, 1e-9]) {
      for (const [d1, d2] of [
        [2, 2],
        [14, 2000],
        [37.5, 4100],
        [300, 300],
        [1e4, 1e5],
        [2e6, 2e6],
      ])
        fCases.push([1 - alpha, d1, d2]);
    }
    const chiCases: [number, number][] = [];
    for (const alpha of [1e-3, 1e-6, 1e-9]) for (const k of [2, 7.3, 40, 1000]) chiCases.push([1 - alpha, k]);
    // Source: scipy.stats.f.ppf(p, d1, d2) and scipy.stats.chi2.ppf(p, k), scipy 1.17.
    const ref = scipyReference<{ f: number[]; chi2: number[] }>('quantiles', { f: fCases, chi2: chiCases });
    fCases.forEach(([p, d1, d2], i) => expect(fUpperQuantile(1 - p, d1, d2)).toBeCloseTo(ref.f[i], 6));
    fCases.forEach(([p, d1, d2], i) =>
      expect(Math.abs(fUpperQuantile(1 - p, d1, d2) / ref.f[i] - 1)).toBeLessThan(1e-6),
    );
    chiCases.forEach(([p, k], i) =>
      expect(Math.abs((chi2MeanUpperQuantile(1 - p, k) * k) / ref.chi2[i] - 1)).toBeLessThan(1e-6),
    );
  });

  it('the squared-Hann correlation of neighbouring bin powers is 4/9, then 1/36, then zero', () => {
    // Source: w² = 3/8 − ½cos θ + ⅛cos 2θ for periodic Hann, so c(1) = −¼/(3/8) = −2/3 and c(2) = (1/16)/(3/8) = 1/6
    // (Fourier series of the squared window; Heinzel et al. 2002 §7 give the same Hann coefficients).
    const c = binPowerCorrelation(hann(256), 8);
    expect(c[1]).toBeCloseTo(4 / 9, 12);
    expect(c[2]).toBeCloseTo(1 / 36, 12);
    expect(c[3]).toBeLessThan(1e-20);
  });

  it('the band-sum degrees of freedom match a Monte Carlo of scipy.signal.welch on white noise', () => {
    const segment = 256;
    const segments = 8;
    const bands: [number, number][] = [
      [10, 10],
      [20, 23],
      [40, 71],
      [5, 124],
    ];
    const corr = binPowerCorrelation(hann(segment));
    const nu = bands.map(([lo, hi]) => bandDegreesOfFreedom(segments, hi - lo + 1, corr));
    const alpha = 0.01;
    const thresholds = nu.map((v) => fUpperQuantile(alpha, v, v));
    const trials = 3000;
    // Source: scipy.signal.welch(hann, nperseg=256, noverlap=0) of numpy default_rng(20261201) white noise; the
    // Satterthwaite dof of a sum S is 2·E[S]²/Var[S].
    const ref = scipyReference<{ bands: { mean: number; var: number; exceed: number }[] }>('band-mc', {
      seed: 20261201,
      trials,
      segment,
      segments,
      bands,
      threshold: thresholds,
    });
    ref.bands.forEach((b, i) => {
      const nuMc = (2 * b.mean * b.mean) / b.var;
      // Relative standard error of a sample variance of ~χ² data from 6000 draws is ≈ sqrt(2/6000) ≈ 1.8 %: allow 4σ.
      expect(Math.abs(nuMc / nu[i] - 1)).toBeLessThan(0.075);
      // Exceedances of the F(ν, ν) quantile at α = 0.01 in 3000 trials: binomial mean 30, 99.99 % range 11..53
      // (scipy.stats.binom(3000, 0.01).ppf(5e-5), .ppf(1 − 5e-5)).
      expect(b.exceed).toBeGreaterThanOrEqual(11);
      expect(b.exceed).toBeLessThanOrEqual(53);
    });
    // The NENBW rule of thumb (B/1.5) would overstate the widest band's dof by ~27 %: the Monte Carlo tells them apart.
    const wide = ref.bands[3];
    const nuMcWide = (2 * wide.mean * wide.mean) / wide.var;
    expect(Math.abs(nuMcWide / (2 * segments * (120 / 1.5)) - 1)).toBeGreaterThan(0.15);
  }, 180_000); // the scipy Monte Carlo takes ~15 s alone and 80 s on a loaded 2-core machine

  it('effective bins grow from 1 toward B/1.944 for Hann', () => {
    const corr = binPowerCorrelation(hann(1024));
    expect(effectiveBins(1, corr)).toBe(1);
    // Limit B / (1 + 2(4/9 + 1/36)) = B / 1.9444 (from the coefficients above).
    expect(effectiveBins(10000, corr) / 10000).toBeCloseTo(1 / (1 + 2 * (4 / 9 + 1 / 36)), 3);
  });

  it('the rise threshold never goes below the user margin and grows as the estimates get shorter', () => {
    expect(riseThresholdDb(3, 1e-6, 1e6, 1e6)).toBe(3);
    const short = riseThresholdDb(3, 1e-6, 20, 2000);
    // F(20, 2000) upper 1e-6 quantile = 3.31 → 5.2 dB (scipy.stats.f.isf(1e-6, 20, 2000), checked in a python3 session).
    expect(short).toBeCloseTo(10 * Math.log10(3.310035), 4);
  });

  it('refuses probabilities and degrees of freedom outside their range', () => {
    expect(() => fUpperQuantile(0, 2, 2)).toThrow(/false-alarm probability/);
    expect(() => fUpperQuantile(0.01, 0, 2)).toThrow(/degrees of freedom/);
    expect(() => effectiveBins(0, new Float64Array([1]))).toThrow(/bins/);
  });
});
