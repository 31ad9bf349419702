// Per-series accumulation of one level's current interval: count, Σ power, min and max of the per-segment RMS.
// A series' row is finished when a value for a later interval arrives (each series keeps its own interval, so
// channels whose segments are handed over one channel at a time still land in the right rows).
import type { RowBuffer } from './row-buffer.ts';

export class IntervalAccumulator {
  private readonly k: Float64Array;
  private readonly n: Float64Array;
  private readonly sum: Float64Array;
  private readonly lo: Float64Array;
  private readonly hi: Float64Array;
  /** First and last sample index of the values in the open interval. */
  private readonly from: Float64Array;
  private readonly to: Float64Array;

  constructor(
    readonly levelIndex: number,
    readonly length: number,
    readonly seriesCount: number,
    private readonly out: RowBuffer,
    private readonly seriesIds: Int32Array,
  ) {
    this.k = new Float64Array(seriesCount).fill(-1);
    this.n = new Float64Array(seriesCount);
    this.sum = new Float64Array(seriesCount);
    this.lo = new Float64Array(seriesCount);
    this.hi = new Float64Array(seriesCount);
    this.from = new Float64Array(seriesCount);
    this.to = new Float64Array(seriesCount);
  }

  /** Adds one value (power, and its root `rms`) of series s from a segment or snapshot ending at `lastSample`. */
  add(s: number, lastSample: number, power: number, rms: number): void {
    const k = Math.floor(lastSample / this.length);
    if (k !== this.k[s]) {
      this.finish(s);
      this.k[s] = k;
    }
    this.to[s] = lastSample;
    if (this.n[s] === 0) {
      this.from[s] = lastSample;
      this.lo[s] = rms;
      this.hi[s] = rms;
    } else {
      if (rms < this.lo[s]) this.lo[s] = rms;
      if (rms > this.hi[s]) this.hi[s] = rms;
    }
    this.n[s]++;
    this.sum[s] += power;
  }

  /** Writes out every open interval (at the end of a run: they hold all their segments there will be). */
  finishAll(): void {
    for (let s = 0; s < this.seriesCount; s++) this.finish(s);
  }

  private finish(s: number): void {
    const n = this.n[s];
    if (n === 0) return;
    const k = this.k[s];
    this.out.push(
      this.levelIndex,
      this.seriesIds[s],
      k,
      n,
      this.sum[s] / n,
      this.lo[s],
      this.hi[s],
      this.from[s],
      this.to[s],
    );
    this.n[s] = 0;
    this.sum[s] = 0;
  }
}
