// Narrowband lines standing above the local floor (median over the 2H+1 neighbouring bins).
// A line is a bin that is the largest within ±L bins (L = the window's main-lobe half-width) and exceeds the
// local floor by a power ratio. The median is taken only at such local maxima (a fifth of the bins for Hann), and
// is used as the floor across the line's lobe. Its amplitude comes from the density over the main lobe with the
// floor's share taken off (dsp/tone.ts lineAboveFloor, the one rule for every line readout):
//   A_rms² = (Σ_lobe psd[j] − n·floor)·Δf
// (density scaling integrates to the signal's mean square, so a tone's lobe integrates to A_rms² wherever it falls
// between bins; Heinzel, Rüdiger & Schilling 2002, §9–10). The median of averaged noise bins sits below their mean
// (χ²(ν)/ν is skewed), so the floor subtracted is the median divided by chi2MeanMedian(ν) when ν is given.
import { lineAboveFloor } from '../tone.ts';
import { RunningMedian } from './running-median.ts';
import { powerRatioDb } from '../units.ts';

export interface SpurFinderOptions {
  /** Bin centre frequencies, Hz. */
  frequencies: Float64Array;
  binHz: number;
  /** Main-lobe half-width of the window in bins (rounded up for the lobe sum). */
  mainLobeHalfWidth: number;
  /** Half-width of the running median in bins (default max(8, 4·lobe)). */
  floorHalfWidth?: number;
  /** Lines below this frequency are ignored (default: first bin past the DC lobe). */
  minFrequency?: number;
  maxFrequency?: number;
  /** At most this many lines per call, strongest kept (default 64). */
  maxLines?: number;
}

export class SpurFinder {
  readonly bins: number;
  readonly lobe: number;
  readonly maxLines: number;
  /** Local floor under each line of the last find(), density units. */
  readonly lineFloor: Float64Array;
  readonly lineBin: Int32Array;
  readonly lineFrequency: Float64Array;
  readonly lineAmplitude: Float64Array;
  /** Peak bin over local floor, dB. */
  readonly lineHeightDb: Float64Array;
  protected readonly f: Float64Array;
  protected readonly binHz: number;
  protected readonly median: RunningMedian;
  protected readonly firstBin: number;
  protected readonly lastBin: number;
  /** chi2MeanMedian of the estimate being searched (set by find): turns the local median into a mean floor. */
  protected medianToMean = 1;

  constructor(o: SpurFinderOptions) {
    const n = o.frequencies.length;
    if (n < 8) throw new RangeError(`SpurFinder: need at least 8 bins, got ${n}`);
    if (!(o.binHz > 0)) throw new RangeError(`SpurFinder: binHz must be > 0, got ${o.binHz}`);
    if (!(o.mainLobeHalfWidth > 0))
      throw new RangeError(`SpurFinder: mainLobeHalfWidth must be > 0, got ${o.mainLobeHalfWidth}`);
    this.bins = n;
    this.f = o.frequencies;
    this.binHz = o.binHz;
    this.lobe = Math.ceil(o.mainLobeHalfWidth - 1e-9);
    const h = o.floorHalfWidth ?? Math.max(8, 4 * this.lobe);
    if (!Number.isInteger(h) || h <= this.lobe) {
      throw new RangeError(
        `SpurFinder: floorHalfWidth must be an integer > the lobe half-width ${this.lobe}, got ${h}`,
      );
    }
    this.median = new RunningMedian(n, h);
    const fMin = o.minFrequency ?? (this.lobe + 1) * o.binHz;
    const fMax = o.maxFrequency ?? Infinity;
    let first = this.lobe;
    while (first < n && this.f[first] < fMin) first++;
    let last = n - 1 - this.lobe;
    while (last >= first && this.f[last] > fMax) last--;
    this.firstBin = first;
    this.lastBin = last;
    this.maxLines = o.maxLines ?? 64;
    if (!Number.isInteger(this.maxLines) || this.maxLines < 1)
      throw new RangeError(`SpurFinder: maxLines must be a positive integer, got ${o.maxLines}`);
    this.lineFloor = new Float64Array(this.maxLines);
    this.lineBin = new Int32Array(this.maxLines);
    this.lineFrequency = new Float64Array(this.maxLines);
    this.lineAmplitude = new Float64Array(this.maxLines);
    this.lineHeightDb = new Float64Array(this.maxLines);
  }

  /**
   * Finds lines whose peak exceeds the local floor by `ratio` (power). Returns the count; results in line*.
   * `medianToMean` (chi2MeanMedian of the estimate's ν; 1 = no correction) turns the local median into the mean
   * floor density that the amplitude subtracts.
   */
  find(psd: Float64Array, ratio: number, medianToMean = 1): number {
    this.medianToMean = medianToMean;
    if (psd.length < this.bins) throw new RangeError(`SpurFinder.find: psd needs ${this.bins} bins, got ${psd.length}`);
    if (!(ratio > 1)) throw new RangeError(`SpurFinder.find: ratio must be > 1, got ${ratio}`);
    const L = this.lobe;
    const last = this.lastBin;
    let count = 0;
    // Local maxima (largest within ±L, the earliest of equals) in one pass that skips bins already known not to be
    // maxima, so it finds the same set as testing every bin: when psd[k+1..j−1] ≤ psd[k] < psd[j] with j ≤ k+L,
    // none of k..j−1 is a maximum (psd[j] is in reach of each); when psd[k+1..k+L] ≤ psd[k], none of k+1..k+L is
    // (k is in reach, not smaller, and earlier). A NaN stops the skipping: that bin is tested on its own.
    let k = this.firstBin;
    while (k <= last) {
      const p = psd[k];
      const reach = k + L;
      let j = k + 1;
      while (j <= reach && psd[j] <= p) j++;
      let next = reach + 1;
      let isPeak = true;
      if (j <= reach) {
        if (psd[j] > p) {
          k = j;
          continue;
        }
        next = k + 1;
        for (let i = j; i <= reach; i++) {
          if (psd[i] > p) {
            isPeak = false;
            break;
          }
        }
      }
      if (isPeak) {
        for (let i = k - L; i < k; i++) {
          if (psd[i] >= p) {
            isPeak = false;
            break;
          }
        }
      }
      if (isPeak && this.mayStand(psd, k, p, ratio)) count = this.consider(psd, k, ratio, count);
      k = next;
    }
    return count;
  }

  /**
   * False when the median around the maximum at k is surely too high for a line: if H+1 or more window values are
   * all ≥ x, the median (the (H+1)-th largest of 2H+1) is ≥ x, so the smallest of the outermost H+1 values bounds
   * it from below. Math.min compiles to a branch-free minimum; it gives NaN where a value is NaN, and then the
   * comparison form (which skips NaN) decides instead. Edge windows are always worth the median.
   */
  private mayStand(psd: Float64Array, k: number, p: number, ratio: number): boolean {
    const hw = this.median.halfWidth;
    if (k < hw || k + hw >= this.bins) return true;
    let lb = Infinity;
    for (let d = hw, taken = 0; taken <= hw; d--, taken += 2) lb = Math.min(lb, psd[k - d], psd[k + d]);
    if (lb !== lb) {
      lb = Infinity;
      for (let d = hw, taken = 0; taken <= hw; d--, taken += 2) {
        const a = psd[k - d];
        const b = psd[k + d];
        if (a < lb) lb = a;
        if (b < lb) lb = b;
      }
    }
    return p > ratio * lb;
  }

  /** Keeps the local maximum at k if it stands `ratio` over its median floor; returns the new line count. */
  protected consider(psd: Float64Array, k: number, ratio: number, count: number): number {
    const L = this.lobe;
    const p = psd[k];
    const fl = this.median.at(psd, k);
    if (!(p > ratio * fl)) return count;
    const line = lineAboveFloor(psd, this.binHz, L, k, fl / this.medianToMean);
    const h = powerRatioDb(p / fl);
    const height = this.lineHeightDb;
    const cap = this.maxLines;
    let slot = count;
    if (count === cap) {
      // Full: replace the weakest line if this one stands higher.
      let weakest = 0;
      for (let i = 1; i < cap; i++) if (height[i] < height[weakest]) weakest = i;
      if (height[weakest] >= h) return count;
      slot = weakest;
    } else count++;
    this.lineBin[slot] = k;
    this.lineFrequency[slot] = line.frequency;
    this.lineAmplitude[slot] = line.rms;
    height[slot] = h;
    this.lineFloor[slot] = fl;
    return count;
  }

  /** The local floor (median of the 2H+1 bins around k) of a density. */
  floorAt(psd: Float64Array, k: number): number {
    return this.median.at(psd, k);
  }
}
