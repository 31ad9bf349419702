// Averaging of per-segment periodograms for the streaming Welch estimator.
// Every averager takes raw |X[k]|² rows (add) and writes their average (read); scaling is the caller's.
// Constructors allocate; add/read allocate nothing.

/** How segment periodograms are averaged into one estimate (shared by the pipeline, baselines and the wire). */
export type AveragingSpec =
  | { mode: 'mean' }
  | { mode: 'rolling'; count: number }
  | { mode: 'exponential'; tauSeconds: number }
  | { mode: 'max' }
  | { mode: 'median'; count: number };

/** The live pipeline's averaging when none is chosen: exponential with τ = 10 s of sample time. */
export const DEFAULT_AVERAGING: AveragingSpec = { mode: 'exponential', tauSeconds: 10 };

export interface Averager {
  /** Segments contributing to the current estimate. */
  readonly used: number;
  add(power: Float64Array): void;
  /** Writes the averaged row into out[0..bins). Only meaningful when used > 0. */
  read(out: Float64Array): void;
  clear(): void;
}

export const MAX_AVERAGING_COUNT = 4096;

/** Checks an AveragingSpec and names the bad field. */
export function validateAveraging(spec: AveragingSpec): AveragingSpec {
  if (spec === null || typeof spec !== 'object')
    throw new RangeError('averaging must be an object like { mode: "mean" }');
  switch (spec.mode) {
    case 'mean':
    case 'max':
      return spec;
    case 'rolling':
    case 'median':
      if (!Number.isInteger(spec.count) || spec.count < 1 || spec.count > MAX_AVERAGING_COUNT) {
        throw new RangeError(
          `averaging ${spec.mode}: count must be an integer from 1 to ${MAX_AVERAGING_COUNT}, got ${String(spec.count)}`,
        );
      }
      return spec;
    case 'exponential':
      if (!(Number.isFinite(spec.tauSeconds) && spec.tauSeconds > 0)) {
        throw new RangeError(
          `averaging exponential: tauSeconds must be a positive number, got ${String(spec.tauSeconds)}`,
        );
      }
      return spec;
    default:
      throw new RangeError(
        `averaging mode "${String((spec as { mode: unknown }).mode)}" is unknown: choose mean, rolling, exponential, max or median`,
      );
  }
}

/**
 * Builds the averager. `segmentSeconds` is the hop between segment starts in sample time (step/fs), used to turn
 * an exponential time constant τ into a per-segment weight α = 1 − exp(−hop/τ).
 */
export function makeAverager(spec: AveragingSpec, bins: number, hopSeconds: number): Averager {
  validateAveraging(spec);
  switch (spec.mode) {
    case 'mean':
      return new MeanAverager(bins);
    case 'rolling':
      return new RollingAverager(bins, spec.count, false);
    case 'median':
      return new RollingAverager(bins, spec.count, true);
    case 'exponential':
      return new ExponentialAverager(bins, 1 - Math.exp(-hopSeconds / spec.tauSeconds));
    case 'max':
      return new MaxAverager(bins);
  }
}

/** Arithmetic mean of every segment since clear(). */
export class MeanAverager implements Averager {
  used = 0;
  /** Running Σ|X|²; a producer may add a segment into it directly and then call countAdded(). */
  readonly sum: Float64Array;
  constructor(private readonly bins: number) {
    this.sum = new Float64Array(bins);
  }
  countAdded(): void {
    this.used++;
  }
  add(power: Float64Array): void {
    const sum = this.sum;
    const bins = this.bins;
    for (let k = 0; k < bins; k++) sum[k] += power[k];
    this.used++;
  }
  read(out: Float64Array): void {
    const sum = this.sum;
    const bins = this.bins;
    const inv = 1 / this.used;
    for (let k = 0; k < bins; k++) out[k] = sum[k] * inv;
  }
  clear(): void {
    this.sum.fill(0);
    this.used = 0;
  }
}

/** Mean or median over the last `count` segments, kept in a ring of rows. */
export class RollingAverager implements Averager {
  used = 0;
  private readonly ring: Float64Array;
  private readonly column: Float64Array;
  private next = 0;
  constructor(
    private readonly bins: number,
    readonly count: number,
    private readonly median: boolean,
  ) {
    this.ring = new Float64Array(bins * count);
    this.column = new Float64Array(count);
  }
  add(power: Float64Array): void {
    const bins = this.bins;
    const ring = this.ring;
    const base = this.next * bins;
    for (let k = 0; k < bins; k++) ring[base + k] = power[k];
    this.next = (this.next + 1) % this.count;
    if (this.used < this.count) this.used++;
  }
  read(out: Float64Array): void {
    const bins = this.bins;
    const ring = this.ring;
    const used = this.used;
    // Rows in use are the first `used` slots until the ring has filled; after that all of them. Both the sum
    // and the median ignore order, so the slot order does not matter.
    if (!this.median) {
      const inv = 1 / used;
      for (let k = 0; k < bins; k++) {
        let s = 0;
        for (let r = 0; r < used; r++) s += ring[r * bins + k];
        out[k] = s * inv;
      }
      return;
    }
    const column = this.column;
    const bias = medianBias(used);
    for (let k = 0; k < bins; k++) {
      for (let r = 0; r < used; r++) column[r] = ring[r * bins + k];
      out[k] = medianOfFirst(column, used) / bias;
    }
  }
  clear(): void {
    this.ring.fill(0);
    this.used = 0;
    this.next = 0;
  }
}

/**
 * Median over every segment since clear(), up to a capacity fixed at construction (an offline report knows how many
 * segments its span holds), divided by medianBias(n) as scipy.signal.welch(average='median') does. Each bin's column
 * is sorted with the typed-array sort, O(n log n), so thousands of segments stay quick.
 */
export class WholeMedianAverager implements Averager {
  used = 0;
  private readonly rows: Float64Array;
  private readonly column: Float64Array;
  constructor(
    private readonly bins: number,
    readonly capacity: number,
  ) {
    if (!(Number.isInteger(capacity) && capacity >= 1))
      throw new RangeError(`WholeMedianAverager: capacity must be a positive integer, got ${capacity}`);
    this.rows = new Float64Array(bins * capacity);
    this.column = new Float64Array(capacity);
  }
  add(power: Float64Array): void {
    if (this.used === this.capacity)
      throw new RangeError(`WholeMedianAverager: more than the ${this.capacity} segments planned for`);
    const bins = this.bins;
    this.rows.set(power.subarray(0, bins), this.used * bins);
    this.used++;
  }
  read(out: Float64Array): void {
    const bins = this.bins;
    const n = this.used;
    const rows = this.rows;
    const column = this.column.subarray(0, n);
    const bias = medianBias(n);
    const h = n >> 1;
    for (let k = 0; k < bins; k++) {
      for (let r = 0; r < n; r++) column[r] = rows[r * bins + k];
      column.sort();
      out[k] = (n % 2 === 1 ? column[h] : 0.5 * (column[h - 1] + column[h])) / bias;
    }
  }
  clear(): void {
    this.used = 0;
  }
}

/** Exponential average est += α·(P − est); the first segment initialises it. */
export class ExponentialAverager implements Averager {
  used = 0;
  private readonly est: Float64Array;
  constructor(
    private readonly bins: number,
    readonly alpha: number,
  ) {
    this.est = new Float64Array(bins);
  }
  add(power: Float64Array): void {
    const est = this.est;
    const bins = this.bins;
    if (this.used === 0) {
      for (let k = 0; k < bins; k++) est[k] = power[k];
    } else {
      const a = this.alpha;
      for (let k = 0; k < bins; k++) est[k] += a * (power[k] - est[k]);
    }
    this.used++;
  }
  read(out: Float64Array): void {
    const est = this.est;
    const bins = this.bins;
    for (let k = 0; k < bins; k++) out[k] = est[k];
  }
  clear(): void {
    this.est.fill(0);
    this.used = 0;
  }
}

/** Bin-wise maximum since clear() (max-hold). */
export class MaxAverager implements Averager {
  used = 0;
  private readonly max: Float64Array;
  constructor(private readonly bins: number) {
    this.max = new Float64Array(bins);
  }
  add(power: Float64Array): void {
    const max = this.max;
    const bins = this.bins;
    if (this.used === 0) {
      for (let k = 0; k < bins; k++) max[k] = power[k];
    } else {
      for (let k = 0; k < bins; k++) if (power[k] > max[k]) max[k] = power[k];
    }
    this.used++;
  }
  read(out: Float64Array): void {
    const max = this.max;
    const bins = this.bins;
    for (let k = 0; k < bins; k++) out[k] = max[k];
  }
  clear(): void {
    this.max.fill(0);
    this.used = 0;
  }
}

/**
 * Bias of the sample median of n χ²₂ variates relative to their mean, as scipy.signal's _median_bias:
 * 1 + Σ_{i=1}^{(n−1)/2} (1/(2i+1) − 1/(2i)) (integer division; Allen et al. 2012, FINDCHIRP, appendix B).
 */
export function medianBias(n: number): number {
  let b = 1;
  const m = Math.floor((n - 1) / 2);
  for (let i = 1; i <= m; i++) b += 1 / (2 * i + 1) - 1 / (2 * i);
  return b;
}

// Median of a[0..n) as numpy does it (mean of the two middle values for even n). Insertion sort: n is small
// (the averaging count) and the sort runs in place in a preallocated column.
function medianOfFirst(a: Float64Array, n: number): number {
  for (let i = 1; i < n; i++) {
    const v = a[i];
    let j = i - 1;
    while (j >= 0 && a[j] > v) {
      a[j + 1] = a[j];
      j--;
    }
    a[j + 1] = v;
  }
  const h = n >> 1;
  return n % 2 === 1 ? a[h] : 0.5 * (a[h - 1] + a[h]);
}
