// Band-limited RMS from a one-sided density: RMS = sqrt(Σ psd[k]·Δf) over the bins whose centre frequency
// f = k·Δf satisfies low ≤ f ≤ high (a Riemann sum of ∫ S(f) df; Parseval for the one-sided density).

/** Inclusive bin range [first, last] of a band; empty when first > last. */
export interface BinRange {
  readonly first: number;
  readonly last: number;
}

/** Bins k in [0, bins) with low ≤ k·binHz ≤ high, computed with the same product k·binHz as the frequency axis. */
export function bandBins(bins: number, binHz: number, low: number, high: number): BinRange {
  if (!(Number.isInteger(bins) && bins > 0))
    throw new RangeError(`bandBins: bins must be a positive integer, got ${bins}`);
  if (!(Number.isFinite(binHz) && binHz > 0))
    throw new RangeError(`bandBins: binHz must be a positive number, got ${binHz}`);
  if (!(Number.isFinite(low) && Number.isFinite(high) && low >= 0 && low <= high)) {
    throw new RangeError(`band ${low}:${high} Hz is invalid: need 0 ≤ low ≤ high, both finite`);
  }
  let first = Math.ceil(low / binHz);
  while (first > 0 && (first - 1) * binHz >= low) first--;
  while (first * binHz < low) first++;
  let last = Math.floor(high / binHz);
  while ((last + 1) * binHz <= high) last++;
  while (last >= 0 && last * binHz > high) last--;
  return { first: Math.max(first, 0), last: Math.min(last, bins - 1) };
}

/** sqrt(Σ psd[k]·binHz) over a precomputed range (hot path: no checks, no allocation). 0 for an empty range. */
export function bandRmsInBins(psd: Float64Array, binHz: number, first: number, last: number): number {
  let s = 0;
  for (let k = first; k <= last; k++) s += psd[k];
  return Math.sqrt(s * binHz);
}

/** Amplitude spectral density sqrt(psd) (unit/√Hz) into out (allocated if absent). */
export function asd(psd: Float64Array, out?: Float64Array): Float64Array {
  const n = psd.length;
  const result = out ?? new Float64Array(n);
  for (let k = 0; k < n; k++) result[k] = Math.sqrt(psd[k]);
  return result;
}

/** Median of psd[first..last] (a band's floor: lines barely move it). `scratch` holds at least the range; NaN when empty. */
export function bandMedianInBins(psd: Float64Array, first: number, last: number, scratch: Float64Array): number {
  const n = last - first + 1;
  if (n <= 0) return NaN;
  const a = scratch.subarray(0, n);
  a.set(psd.subarray(first, last + 1));
  a.sort();
  return n % 2 ? a[(n - 1) >> 1] : 0.5 * (a[n / 2 - 1] + a[n / 2]);
}
