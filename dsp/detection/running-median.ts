// Running median across frequency bins: the local noise floor under narrowband lines. A median over 2H+1 bins
// ignores a line whose main lobe covers fewer than H bins (robust location estimate, common practice for
// spectral peak detection). Edges use the truncated window. Allocates only in the constructor.

export class RunningMedian {
  readonly bins: number;
  readonly halfWidth: number;
  private readonly scratch: Float64Array;

  constructor(bins: number, halfWidth: number) {
    if (!Number.isInteger(bins) || bins < 1)
      throw new RangeError(`RunningMedian: bins must be a positive integer, got ${bins}`);
    if (!Number.isInteger(halfWidth) || halfWidth < 1) {
      throw new RangeError(`RunningMedian: halfWidth must be a positive integer number of bins, got ${halfWidth}`);
    }
    this.bins = bins;
    this.halfWidth = halfWidth;
    this.scratch = new Float64Array(2 * halfWidth + 1);
  }

  /**
   * out[k] = median of input[k−H .. k+H] (clipped to the array); input and out must not alias. The window is kept
   * sorted as it slides (one removal and one insertion per bin, each a binary search and a shift), which costs far
   * less than selecting afresh at every bin. NaN input is refused: it has no place in a sorted window.
   */
  apply(input: Float64Array, out: Float64Array): Float64Array {
    const n = this.bins;
    if (input.length < n || out.length < n) throw new RangeError(`RunningMedian.apply: arrays need ${n} bins`);
    if (input === out) throw new RangeError('RunningMedian.apply: input and out must be different arrays');
    const h = this.halfWidth;
    const s = this.scratch;
    let m = 0;
    const first = Math.min(h, n - 1);
    for (let j = 0; j <= first; j++) m = insertSorted(s, m, checked(input[j]));
    for (let k = 0; k < n; k++) {
      if (k > 0) {
        // Remove before inserting: the scratch holds exactly 2H+1 values.
        const outgoing = k - h - 1;
        if (outgoing >= 0) m = removeSorted(s, m, input[outgoing]);
        const incoming = k + h;
        if (incoming < n) m = insertSorted(s, m, checked(input[incoming]));
      }
      const mid = m >> 1;
      out[k] = m & 1 ? s[mid] : 0.5 * (s[mid - 1] + s[mid]);
    }
    return out;
  }

  /** Median of input[k−H .. k+H] (clipped to the array) alone, by quickselect: for a few bins of a spectrum. */
  at(input: Float64Array, k: number): number {
    const n = this.bins;
    const h = this.halfWidth;
    const lo = k - h < 0 ? 0 : k - h;
    const hi = k + h >= n ? n - 1 : k + h;
    const m = hi - lo + 1;
    const s = this.scratch;
    for (let j = 0; j < m; j++) s[j] = checked(input[lo + j]);
    const mid = m >> 1;
    const upper = select(s, m, mid);
    if (m & 1) return upper;
    let lower = -Infinity;
    for (let i = 0; i < mid; i++) if (s[i] > lower) lower = s[i];
    return 0.5 * (lower + upper);
  }
}

function checked(x: number): number {
  if (x !== x)
    throw new RangeError('RunningMedian: input holds NaN; a spectrum must be complete before its floor is taken');
  return x;
}

/** Inserts x into the sorted s[0..m); returns m + 1. */
function insertSorted(s: Float64Array, m: number, x: number): number {
  let lo = 0;
  let hi = m;
  while (lo < hi) {
    const mid = (lo + hi) >> 1;
    if (s[mid] < x) lo = mid + 1;
    else hi = mid;
  }
  for (let i = m; i > lo; i--) s[i] = s[i - 1];
  s[lo] = x;
  return m + 1;
}

/** Removes one element equal to x from the sorted s[0..m); returns m − 1. */
function removeSorted(s: Float64Array, m: number, x: number): number {
  let lo = 0;
  let hi = m - 1;
  while (lo < hi) {
    const mid = (lo + hi) >> 1;
    if (s[mid] < x) lo = mid + 1;
    else hi = mid;
  }
  for (let i = lo; i < m - 1; i++) s[i] = s[i + 1];
  return m - 1;
}

/** k-th smallest of a[0..m) by quickselect (Hoare partition); reorders a. */
export function select(a: Float64Array, m: number, k: number): number {
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
