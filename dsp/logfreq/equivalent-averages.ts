// Overlap-corrected number of averages of a segment-averaged estimate (P. D. Welch, IEEE Trans. Audio
// Electroacoust. 15 (1967) 70–73): var/mean² = (1/K)·(1 + 2 Σ_{l=1}^{K−1} (1 − l/K)·ρ(l·D)), with
// ρ(s) = (Σ w[n]·w[n+s])² / (Σw²)² the squared overlap correlation of the window at a shift of s samples.
import { overlapCorrelation } from '../windows.ts';

/** ρ(l·D) for l = 1, 2, … while the shifted segments still overlap. */
export function overlapCorrelations(window: Float64Array, step: number): Float64Array {
  let sumSq = 0;
  for (let i = 0; i < window.length; i++) sumSq += window[i] * window[i];
  const lags = Math.max(0, Math.ceil(window.length / step) - 1);
  const rho = new Float64Array(lags);
  for (let l = 1; l <= lags; l++) {
    const oc = overlapCorrelation(window, l * step, sumSq);
    rho[l - 1] = oc * oc;
  }
  return rho;
}

/**
 * K_eq for `segments` consecutive segments, from correlations rho[offset .. offset+lags) as
 * overlapCorrelations() returns them (offset and lags let packed tables be read without a view).
 */
export function equivalentFromCorrelations(rho: Float64Array, segments: number, offset = 0, lags = rho.length - offset): number {
  if (segments <= 1) return segments;
  let factor = 1;
  for (let l = 1; l < segments && l <= lags; l++) factor += 2 * (1 - l / segments) * rho[offset + l - 1];
  return segments / factor;
}

export function equivalentAverages(window: Float64Array, step: number, segments: number): number {
  return equivalentFromCorrelations(overlapCorrelations(window, step), segments);
}
