// A fixed, reduced log-frequency grid for keeping spectra: N points from the first bin to Nyquist, equally spaced
// in log f. Each point stands for a cell between the geometric midpoints to its neighbours and holds the largest
// density of the bins whose centre lies in the cell (so a narrow line keeps its height when many bins share a
// cell); a cell narrower than a bin takes the bin nearest its point. The same rule reduces a live spectrum, a
// stored one and a baseline, so they compare point by point.

/** Frequency of point j of an n-point grid from fLow to fHigh (log spaced, both ends included). */
export function logGridFrequency(j: number, n: number, fLow: number, fHigh: number): number {
  return n < 2 ? fLow : fLow * (fHigh / fLow) ** (j / (n - 1));
}

export function logGridFrequencies(n: number, fLow: number, fHigh: number): Float64Array {
  const f = new Float64Array(n);
  for (let j = 0; j < n; j++) f[j] = logGridFrequency(j, n, fLow, fHigh);
  return f;
}

/**
 * Reduces a one-sided density on bins k·binHz (k = 0 … psd.length − 1) to `out.length` grid points from fLow to
 * fHigh. Bin 0 (DC) is never used. Returns `out`.
 */
export function reduceToLogGrid<T extends Float32Array | Float64Array>(
  psd: ArrayLike<number>,
  binHz: number,
  fLow: number,
  fHigh: number,
  out: T,
): T {
  const n = out.length;
  const bins = psd.length;
  const step = n < 2 ? 1 : (fHigh / fLow) ** (1 / (n - 1));
  const half = Math.sqrt(step);
  for (let j = 0; j < n; j++) {
    const f = logGridFrequency(j, n, fLow, fHigh);
    // Bins whose centre lies in [f/√step, f·√step); the 1e-9 keeps a centre on an edge in one cell only.
    let a = Math.ceil(f / half / binHz - 1e-9);
    let b = Math.ceil((f * half) / binHz - 1e-9) - 1;
    if (b < a) a = b = Math.round(f / binHz);
    a = Math.max(1, Math.min(bins - 1, a));
    b = Math.max(a, Math.min(bins - 1, b));
    let m = psd[a];
    for (let k = a + 1; k <= b; k++) if (psd[k] > m) m = psd[k];
    out[j] = m;
  }
  return out;
}
