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
  private readonly f: Float64Array;
  private readonly binHz: number;
  private readonly median: RunningMedian;
  private readonly firstBin: number;
  private readonly lastBin: number;

  constructor(o: SpurFinderOptions) {
    const n = o.frequencies.length;
    if (n < 8) throw new RangeError(`SpurFinder: need at least 8 bins, got ${n}`);
    if (!(o.binHz > 0)) throw new RangeError(`SpurFinder: binHz must be > 0, got ${o.binHz}`);
    if (!(o.mainLobeHalfWidth > 0)) throw new RangeError(`SpurFinder: mainLobeHalfWidth must be > 0, got ${o.mainLobeHalfWidth}`);
    this.bins = n;
    this.f = o.frequencies;
    this.binHz = o.binHz;
    this.lobe = Math.ceil(o.mainLobeHalfWidth - 1e-9);
    const h = o.floorHalfWidth ?? Math.max(8, 4 * this.lobe);
    if (!Number.isInteger(h) || h <= this.lobe) {
      throw new RangeError(`SpurFinder: floorHalfWidth must be an integer > the lobe half-width ${this.lobe}, got ${h}`);
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
    if (!Number.isInteger(this.maxLines) || this.maxLines < 1) throw new RangeError(`SpurFinder: maxLines must be a positive integer, got ${o.maxLines}`);
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
    if (psd.length < this.bins) throw new RangeError(`SpurFinder.find: psd needs ${this.bins} bins, got ${psd.length}`);
    if (!(ratio > 1)) throw new RangeError(`SpurFinder.find: ratio must be > 1, got ${ratio}`);
    const median = this.median;
    const hw = median.halfWidth;
    const n = this.bins;
    const L = this.lobe;
    const df = this.binHz;
    const cap = this.maxLines;
    const bin = this.lineBin;
    const freq = this.lineFrequency;
    const amp = this.lineAmplitude;
    const height = this.lineHeightDb;
    let count = 0;
    const lineFloor = this.lineFloor;
    for (let k = this.firstBin; k <= this.lastBin; k++) {
      const p = psd[k];
      let isPeak = true;
      for (let j = k - L; j <= k + L; j++) {
        if (psd[j] > p || (psd[j] === p && j < k)) {
          isPeak = false;
          break;
        }
      }
      if (!isPeak) continue;
      if (k >= hw && k + hw < n) {
        // Cheap rejection first: if H+1 or more window values are all ≥ x, the median (the (H+1)-th largest of
        // 2H+1) is ≥ x. So the smallest of the outermost H+1 values bounds the median from below.
        let lb = Infinity;
        for (let d = hw, taken = 0; taken <= hw; d--, taken += 2) {
          const a = psd[k - d];
          const b = psd[k + d];
          if (a < lb) lb = a;
          if (b < lb) lb = b;
        }
        if (!(p > ratio * lb)) continue;
      }
      const fl = median.at(psd, k);
      if (!(p > ratio * fl)) continue;
      const line = lineAboveFloor(psd, df, L, k, fl / medianToMean);
      const h = 10 * Math.log10(p / fl);
      let slot = count;
      if (count === cap) {
        // Full: replace the weakest line if this one stands higher.
        let weakest = 0;
        for (let i = 1; i < cap; i++) if (height[i] < height[weakest]) weakest = i;
        if (height[weakest] >= h) continue;
        slot = weakest;
      } else count++;
      bin[slot] = k;
      freq[slot] = line.frequency;
      amp[slot] = line.rms;
      height[slot] = h;
      lineFloor[slot] = fl;
    }
    return count;
  }

  /** The local floor (median of the 2H+1 bins around k) of a density. */
  floorAt(psd: Float64Array, k: number): number {
    return this.median.at(psd, k);
  }
}
