// Running median across frequency bins: the local noise floor under narrowband lines. A median over 2H+1 bins
// ignores a line whose main lobe covers fewer than H bins (robust location estimate, common practice for
// spectral peak detection). Edges use the truncated window. Allocates only in the constructor.

export class RunningMedian {
  readonly bins: number;
  readonly halfWidth: number;
  private readonly scratch: Float64Array;

  constructor(bins: number, halfWidth: number) {
    if (!Number.isInteger(bins) || bins < 1) throw new RangeError(`RunningMedian: bins must be a positive integer, got ${bins}`);
    if (!Number.isInteger(halfWidth) || halfWidth < 1) {
      throw new RangeError(`RunningMedian: halfWidth must be a positive integer number of bins, got ${halfWidth}`);
    }
    this.bins = bins;
    this.halfWidth = halfWidth;
    this.scratch = new Float64Array(2 * halfWidth + 1);
  }

  /** out[k] = median of input[k−H .. k+H] (clipped to the array); input and out must not alias. */
  apply(input: Float64Array, out: Float64Array): Float64Array {
    const n = this.bins;
    if (input.length < n || out.length < n) throw new RangeError(`RunningMedian.apply: arrays need ${n} bins`);
    if (input === out) throw new RangeError('RunningMedian.apply: input and out must be different arrays');
    const h = this.halfWidth;
    const s = this.scratch;
    for (let k = 0; k < n; k++) {
      const lo = k - h < 0 ? 0 : k - h;
      const hi = k + h >= n ? n - 1 : k + h;
      const m = hi - lo + 1;
      for (let j = 0; j < m; j++) s[j] = input[lo + j];
      out[k] = medianInPlace(s, m);
    }
    return out;
  }
}

/** Median of a[0..m) by quickselect (Hoare); reorders a. Even m: mean of the two middle values. */
export function medianInPlace(a: Float64Array, m: number): number {
  const mid = m >> 1;
  const upper = select(a, m, mid);
  if (m & 1) return upper;
  let lower = -Infinity;
  for (let i = 0; i < mid; i++) if (a[i] > lower) lower = a[i];
  return 0.5 * (lower + upper);
}

function select(a: Float64Array, m: number, k: number): number {
  let lo = 0;
  let hi = m - 1;
  while (lo < hi) {
    const pivot = a[(lo + hi) >> 1];
    let i = lo;
    let j = hi;
    while (i <= j) {
      while (a[i] < pivot) i++;
      while (a[j] > pivot) j--;
      if (i <= j) {
        const t = a[i];
        a[i] = a[j];
        a[j] = t;
        i++;
        j--;
      }
    }
    if (k <= j) hi = j;
    else if (k >= i) lo = i;
    else break;
  }
  return a[k];
}
