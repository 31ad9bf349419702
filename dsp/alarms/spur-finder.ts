// Narrowband lines standing above the local floor (running median over neighbouring bins).
// A line is a bin that is the largest within ±L bins (L = the window's main-lobe half-width) and exceeds the
// local floor by a power ratio. Its amplitude comes from the density over the main lobe with the floor taken off:
//   A_rms² = Σ_lobe (psd[j] − floor[j])·Δf
// (density scaling integrates to the signal's mean square, so a tone's lobe integrates to A_rms² wherever it falls
// between bins; Heinzel, Rüdiger & Schilling 2002, §9–10). Frequency is the power-weighted centroid over the lobe.
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
  /** Local floor of the last find(), density units. */
  readonly floor: Float64Array;
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
    this.floor = new Float64Array(n);
    this.lineBin = new Int32Array(this.maxLines);
    this.lineFrequency = new Float64Array(this.maxLines);
    this.lineAmplitude = new Float64Array(this.maxLines);
    this.lineHeightDb = new Float64Array(this.maxLines);
  }

  /** Finds lines whose peak exceeds the local floor by `ratio` (power). Returns the count; results in line*. */
  find(psd: Float64Array, ratio: number): number {
    if (psd.length < this.bins) throw new RangeError(`SpurFinder.find: psd needs ${this.bins} bins, got ${psd.length}`);
    if (!(ratio > 1)) throw new RangeError(`SpurFinder.find: ratio must be > 1, got ${ratio}`);
    const floor = this.median.apply(psd, this.floor);
    const L = this.lobe;
    const f = this.f;
    const df = this.binHz;
    const cap = this.maxLines;
    const bin = this.lineBin;
    const freq = this.lineFrequency;
    const amp = this.lineAmplitude;
    const height = this.lineHeightDb;
    let count = 0;
    for (let k = this.firstBin; k <= this.lastBin; k++) {
      const p = psd[k];
      if (!(p > ratio * floor[k])) continue;
      let isPeak = true;
      for (let j = k - L; j <= k + L; j++) {
        if (psd[j] > p || (psd[j] === p && j < k)) {
          isPeak = false;
          break;
        }
      }
      if (!isPeak) continue;
      let power = 0;
      let moment = 0;
      for (let j = k - L; j <= k + L; j++) {
        const excess = psd[j] - floor[j];
        if (excess > 0) {
          power += excess;
          moment += excess * f[j];
        }
      }
      const h = 10 * Math.log10(p / floor[k]);
      let slot = count;
      if (count === cap) {
        // Full: replace the weakest line if this one stands higher.
        let weakest = 0;
        for (let i = 1; i < cap; i++) if (height[i] < height[weakest]) weakest = i;
        if (height[weakest] >= h) continue;
        slot = weakest;
      } else count++;
      bin[slot] = k;
      freq[slot] = moment / power;
      amp[slot] = Math.sqrt(power * df);
      height[slot] = h;
    }
    return count;
  }
}
