// Overlap-corrected number of averages of a segment-averaged estimate (P. D. Welch, IEEE Trans. Audio
// Electroacoust. 15 (1967) 70–73): var/mean² = (1/K)·(1 + 2 Σ_{l=1}^{K−1} (1 − l/K)·ρ(l·D)), with
// ρ(s) = (Σ w[n]·w[n+s])² / (Σw²)² the squared overlap correlation of the window at a shift of s samples.
import { overlapCorrelation } from '../windows.ts';

export function equivalentAverages(window: Float64Array, step: number, segments: number): number {
  if (segments <= 1) return segments;
  let sumSq = 0;
  for (let i = 0; i < window.length; i++) sumSq += window[i] * window[i];
  let factor = 1;
  for (let l = 1; l < segments && l * step < window.length; l++) {
    const oc = overlapCorrelation(window, l * step, sumSq);
    factor += 2 * (1 - l / segments) * oc * oc;
  }
  return segments / factor;
}
