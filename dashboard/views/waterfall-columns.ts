// Pixel columns of the waterfall to FFT bins, on the same log-frequency axis as the spectrum chart above it.

/** For each of `width` columns spanning [fLow, fHigh] on a log axis: the first and last bin whose centre lies
 *  in the column; a column narrower than a bin shows the bin nearest its centre. Bin k sits at k·binHz. */
export function logColumns(
  width: number,
  bins: number,
  binHz: number,
  fLow: number,
  fHigh: number,
): { first: Int32Array<ArrayBuffer>; last: Int32Array<ArrayBuffer> } {
  const first = new Int32Array(width);
  const last = new Int32Array(width);
  const lo = Math.log10(fLow);
  const hi = Math.log10(fHigh);
  const edge = (x: number): number => 10 ** (lo + ((hi - lo) * x) / width);
  for (let x = 0; x < width; x++) {
    const f0 = edge(x);
    const f1 = edge(x + 1);
    let a = Math.ceil(f0 / binHz - 1e-9);
    let b = Math.ceil(f1 / binHz - 1e-9) - 1;
    if (b < a) a = b = Math.round(Math.sqrt(f0 * f1) / binHz);
    first[x] = Math.max(1, Math.min(bins - 1, a));
    last[x] = Math.max(first[x], Math.min(bins - 1, b));
  }
  return { first, last };
}

/** Column (0-based, fractional) where frequency f sits. */
export function columnOf(f: number, width: number, fLow: number, fHigh: number): number {
  return ((Math.log10(f) - Math.log10(fLow)) / (Math.log10(fHigh) - Math.log10(fLow))) * width;
}

/** For each of `width` columns spanning [fLow, fHigh] on a log axis: the first and last point of an n-point log
 *  grid from gLow to gHigh (dsp/log-grid.ts) inside the column, or the point nearest its centre. */
export function gridColumns(
  width: number,
  fLow: number,
  fHigh: number,
  n: number,
  gLow: number,
  gHigh: number,
): { first: Int32Array<ArrayBuffer>; last: Int32Array<ArrayBuffer> } {
  const first = new Int32Array(width);
  const last = new Int32Array(width);
  const lo = Math.log10(fLow);
  const hi = Math.log10(fHigh);
  const per = (n - 1) / (Math.log10(gHigh) - Math.log10(gLow));
  const index = (logF: number): number => (logF - Math.log10(gLow)) * per;
  for (let x = 0; x < width; x++) {
    const a = Math.ceil(index(lo + ((hi - lo) * x) / width) - 1e-9);
    const b = Math.ceil(index(lo + ((hi - lo) * (x + 1)) / width) - 1e-9) - 1;
    const mid = Math.round(index(lo + ((hi - lo) * (x + 0.5)) / width));
    first[x] = Math.max(0, Math.min(n - 1, b < a ? mid : a));
    last[x] = Math.max(first[x], Math.min(n - 1, b < a ? mid : b));
  }
  return { first, last };
}
