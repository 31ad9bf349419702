// Statistics of a band-power comparison between a live Welch estimate and a baseline Welch estimate.
//
// A Welch density bin (not DC, not Nyquist) of Gaussian noise is distributed as P·χ²(ν₀)/ν₀ with ν₀ = 2·K_eq,
// K_eq the overlap-corrected number of averages (Welch 1967). Summing B bins of one segment does not multiply the
// degrees of freedom by B, because the window makes neighbouring bins correlated. For Gaussian noise with a flat
// density across the band, Cov(|X_i|², |X_j|²) = |E[X_i X_j*]|² (Isserlis), and E[X_i X_j*] ∝ c(i−j) with
//   c(m) = Σ_n w[n]² e^{−j2πmn/N} / Σ_n w[n]²            (the DFT of the squared window, normalised)
// Matching mean and variance of the band sum S to a scaled χ² (Satterthwaite 1946) gives
//   ν_band = 2·K_eq·B_eff,   B_eff = B² / Σ_{i,j} |c(i−j)|² = B² / (B + 2 Σ_{m=1}^{B−1} (B−m)|c(m)|²).
// For Hann, |c(1)|² = 4/9 and |c(2)|² = 1/36, so a wide band has B_eff → B/1.944 (not B/NENBW = B/1.5; the
// NENBW rule undercounts the correlation of power, which goes as the squared window's spectrum).
// The time/frequency factorisation (K_eq from overlap, B_eff from the window) is the usual approximation.
//
// The live-to-baseline band power ratio of two independent estimates of the same floor is then
// F(ν_live, ν_base) distributed, and the rise threshold at a false-alarm probability α per evaluation is
// F⁻¹(1 − α; ν_live, ν_base).
import fQuantile from '@stdlib/stats-base-dists-f-quantile';
import chi2Quantile from '@stdlib/stats-base-dists-chisquare-quantile';
import { powerRatioDb } from '../units.ts';

/** How many bin lags of the squared-window correlation are kept; beyond ~8 they are below 1e-6 for every
 *  tapered window we ship, and a rect window with no overlap has none at all. */
export const MAX_CORRELATION_LAG = 64;

/**
 * |c(m)|² for m = 0..maxLag: the correlation coefficient of periodogram powers m bins apart (white Gaussian
 * input), computed from the window samples. Entry 0 is 1.
 */
export function binPowerCorrelation(window: ArrayLike<number>, maxLag = MAX_CORRELATION_LAG): Float64Array {
  const n = window.length;
  if (n < 2) throw new RangeError(`binPowerCorrelation: window needs at least 2 samples, got ${n}`);
  if (!Number.isInteger(maxLag) || maxLag < 0)
    throw new RangeError(`binPowerCorrelation: maxLag must be a non-negative integer, got ${maxLag}`);
  let s2 = 0;
  for (let i = 0; i < n; i++) s2 += window[i] * window[i];
  if (!(s2 > 0)) throw new RangeError('binPowerCorrelation: window is all zeros');
  const lags = Math.min(maxLag, n - 1);
  const out = new Float64Array(lags + 1);
  out[0] = 1;
  for (let m = 1; m <= lags; m++) {
    let re = 0;
    let im = 0;
    const step = (2 * Math.PI * m) / n;
    for (let i = 0; i < n; i++) {
      const w2 = window[i] * window[i];
      re += w2 * Math.cos(step * i);
      im -= w2 * Math.sin(step * i);
    }
    out[m] = (re * re + im * im) / (s2 * s2);
  }
  return out;
}

/** B_eff = B² / Σ_{i,j}|c(i−j)|²: the number of independent bins a sum over `bins` adjacent bins is worth. */
export function effectiveBins(bins: number, correlation: Float64Array): number {
  if (!Number.isInteger(bins) || bins < 1)
    throw new RangeError(`effectiveBins: bins must be a positive integer, got ${bins}`);
  let denom = bins;
  const last = Math.min(bins - 1, correlation.length - 1);
  for (let m = 1; m <= last; m++) denom += 2 * (bins - m) * correlation[m];
  return (bins * bins) / denom;
}

/** Degrees of freedom of a band sum: ν = 2·K_eq·B_eff. */
export function bandDegreesOfFreedom(equivalentAverages: number, bins: number, correlation: Float64Array): number {
  if (!(equivalentAverages > 0))
    throw new RangeError(`bandDegreesOfFreedom: equivalentAverages must be > 0, got ${equivalentAverages}`);
  return 2 * equivalentAverages * effectiveBins(bins, correlation);
}

/** Upper F quantile F⁻¹(1 − α; ν1, ν2) as a power ratio. */
export function fUpperQuantile(alpha: number, nu1: number, nu2: number): number {
  checkAlpha(alpha, 'fUpperQuantile');
  if (!(nu1 > 0) || !(nu2 > 0))
    throw new RangeError(`fUpperQuantile: degrees of freedom must be > 0, got ${nu1}, ${nu2}`);
  return fQuantile(1 - alpha, nu1, nu2);
}

/** Lower F quantile F⁻¹(α; ν1, ν2) as a power ratio. */
export function fLowerQuantile(alpha: number, nu1: number, nu2: number): number {
  checkAlpha(alpha, 'fLowerQuantile');
  if (!(nu1 > 0) || !(nu2 > 0))
    throw new RangeError(`fLowerQuantile: degrees of freedom must be > 0, got ${nu1}, ${nu2}`);
  return fQuantile(alpha, nu1, nu2);
}

/** Upper quantile of χ²(ν)/ν: how far one averaged bin may rise above its true density by chance. */
export function chi2MeanUpperQuantile(alpha: number, nu: number): number {
  checkAlpha(alpha, 'chi2MeanUpperQuantile');
  if (!(nu > 0)) throw new RangeError(`chi2MeanUpperQuantile: degrees of freedom must be > 0, got ${nu}`);
  return chi2Quantile(1 - alpha, nu) / nu;
}

/** Rise threshold in dB: max(user margin, statistical bound at α for the two estimates' band dof). */
export function riseThresholdDb(marginDb: number, alpha: number, nuLive: number, nuBase: number): number {
  return Math.max(marginDb, powerRatioDb(fUpperQuantile(alpha, nuLive, nuBase)));
}

function checkAlpha(alpha: number, who: string): void {
  if (!(alpha > 0 && alpha < 0.5))
    throw new RangeError(`${who}: false-alarm probability must be in (0, 0.5), got ${alpha}`);
}

/** Median of χ²(ν)/ν: where a running median of averaged noise bins sits relative to their mean. */
export function chi2MeanMedian(nu: number): number {
  if (!(nu > 0)) throw new RangeError(`chi2MeanMedian: degrees of freedom must be > 0, got ${nu}`);
  return chi2Quantile(0.5, nu) / nu;
}

/**
 * K rounded down onto a 1 % grid: thresholds computed for it are cached while a growing average's K creeps up
 * (quantiles cost microseconds to milliseconds each), and rounding down only makes the threshold a little stricter.
 */
export function conservativeAverages(k: number): number {
  if (!(k > 0)) return k;
  return Math.exp(Math.floor(Math.log(k) / Math.log1p(0.01)) * Math.log1p(0.01));
}

/**
 * Power ratio over the local median a line must exceed, for K equivalent averages: max(margin, the ratio a noise
 * bin exceeds with probability α/bins) (Bonferroni over the bins searched). Shared by the live spur rule and the
 * offline line list, so both call the same lines on the same spectrum. Both pass K through conservativeAverages.
 */
export function lineThresholdRatio(
  equivalentAverages: number,
  alpha: number,
  bins: number,
  marginRatio: number,
): number {
  const nu = 2 * equivalentAverages;
  return Math.max(marginRatio, chi2MeanUpperQuantile(alpha / bins, nu) / chi2MeanMedian(nu));
}
