// Cumulative RMS against frequency, √(∫ PSD df) from the lowest non-DC bin up: the running form of the total RMS
// (the same Riemann sum Σ psd[k]·Δf, summed in the same order, so its last value is the total RMS exactly).
// Engineers read it to see which band dominates the total: the steps are where the noise power is.

/** out[k] = √(Σ_{j=first}^{k} psd[j]·binHz) for k ≥ first, 0 below first (default first = 1: DC is offset, not noise). */
export function cumulativeRms(
  psd: Float64Array,
  binHz: number,
  first = 1,
  out = new Float64Array(psd.length),
): Float64Array {
  let s = 0;
  for (let k = 0; k < psd.length; k++) {
    if (k >= first) s += psd[k];
    out[k] = k >= first ? Math.sqrt(s * binHz) : 0;
  }
  return out;
}
