// Live band power against a baseline, with the rise threshold from the statistics of both estimates
// (see threshold.ts). Bands select bins whose centre f satisfies low ≤ f ≤ high, as band RMS does.
import { bandBins } from '../bands.ts';
import { bandDegreesOfFreedom, conservativeAverages, riseThresholdDb } from './threshold.ts';
import { powerRatioDb } from '../units.ts';

export interface BandSpec {
  low: number;
  high: number;
}

export interface BandCompareOptions {
  binHz: number;
  bands: readonly BandSpec[];
  /** Baseline density, same bins. */
  baselinePsd: Float64Array;
  baselineEquivalentAverages: number;
  /** |c(m)|² of the window (binPowerCorrelation). */
  correlation: Float64Array;
  /** User margin, dB (the threshold is never below it). */
  marginDb: number;
  /** False-alarm probability per evaluation. */
  alpha: number;
}

export class BandCompare {
  readonly bands: readonly BandSpec[];
  readonly firstBin: Int32Array;
  readonly lastBin: Int32Array;
  readonly baselinePower: Float64Array;
  /** Live/baseline band power of the last evaluate(), dB. */
  readonly levelDb: Float64Array;
  /** Threshold of the last evaluate(), dB. */
  readonly thresholdDb: Float64Array;
  /** 1 when new lines covered every bin of the band in the last evaluate(): level and threshold are then over all bins. */
  readonly coveredByLines: Uint8Array;
  private readonly baselinePsd: Float64Array;
  private readonly baselineK: number;
  private readonly cachedK: Float64Array;
  private readonly cachedBins: Int32Array;
  private readonly binsIn: Int32Array;
  private readonly correlation: Float64Array;
  private readonly marginDb: number;
  private readonly alpha: number;
  private readonly baselineBins: number;

  constructor(o: BandCompareOptions) {
    const bins = o.baselinePsd.length;
    const n = o.bands.length;
    this.bands = o.bands;
    this.baselineBins = bins;
    this.firstBin = new Int32Array(n);
    this.lastBin = new Int32Array(n);
    this.binsIn = new Int32Array(n);
    this.baselinePower = new Float64Array(n);
    this.baselinePsd = o.baselinePsd;
    this.baselineK = o.baselineEquivalentAverages;
    if (!(this.baselineK > 0))
      throw new RangeError(`BandCompare: baseline equivalent averages must be > 0, got ${this.baselineK}`);
    this.cachedK = new Float64Array(n).fill(-1);
    this.cachedBins = new Int32Array(n);
    this.levelDb = new Float64Array(n);
    this.thresholdDb = new Float64Array(n);
    this.coveredByLines = new Uint8Array(n);
    this.correlation = o.correlation;
    this.marginDb = o.marginDb;
    this.alpha = o.alpha;
    for (let b = 0; b < n; b++) {
      const { low, high } = o.bands[b];
      const { first: lo, last: hi } = bandBins(bins, o.binHz, low, high);
      if (hi < lo)
        throw new RangeError(`band ${low}:${high} Hz holds no bin centre (bins are ${o.binHz} Hz apart); widen it`);
      this.firstBin[b] = lo;
      this.lastBin[b] = hi;
      this.binsIn[b] = hi - lo + 1;
      let p = 0;
      for (let k = lo; k <= hi; k++) p += o.baselinePsd[k];
      // A zero floor (a silent channel's baseline) cannot be compared against: such a band is not judged.
      if (!(p >= 0) || !Number.isFinite(p))
        throw new RangeError(
          `BandCompare: baseline power in band ${low}:${high} Hz is ${p}; a floor must be a finite number ≥ 0`,
        );
      this.baselinePower[b] = p;
    }
  }

  /**
   * Fills levelDb and thresholdDb for a live density (same bins as the baseline) with `liveK` equivalent averages.
   * Bins flagged in `exclude` (e.g. the lobes of new narrowband lines, reported by their own rule) are left out
   * of both the live and the baseline sums, and the degrees of freedom follow the bins kept (fewer bins, fewer
   * degrees of freedom, a higher F bound). When lines cover every bin (an overload's lobes and skirts can) nothing is
   * left to stand for the floor: level and threshold are then over all bins, so the reading is a real number rather
   * than a blank, and the band is flagged in coveredByLines (the band rule reports it as not judged).
   */
  evaluate(psd: Float64Array, liveK: number, exclude?: Uint8Array): void {
    const n = this.bands.length;
    if (psd.length < this.baselineBins)
      throw new RangeError(`BandCompare.evaluate: psd has ${psd.length} bins, baseline ${this.baselineBins}`);
    const base = this.baselinePsd;
    const k = conservativeAverages(liveK);
    for (let b = 0; b < n; b++) {
      const hi = this.lastBin[b];
      let p = 0;
      let q = 0;
      let kept = 0;
      if (exclude) {
        for (let k = this.firstBin[b]; k <= hi; k++) {
          if (exclude[k]) continue;
          p += psd[k];
          q += base[k];
          kept++;
        }
      } else {
        for (let k = this.firstBin[b]; k <= hi; k++) p += psd[k];
        q = this.baselinePower[b];
        kept = this.binsIn[b];
      }
      this.coveredByLines[b] = 0;
      if (kept === 0) {
        for (let k = this.firstBin[b]; k <= hi; k++) p += psd[k];
        q = this.baselinePower[b];
        kept = this.binsIn[b];
        this.coveredByLines[b] = 1;
      }
      if (k !== this.cachedK[b] || kept !== this.cachedBins[b]) {
        const nuLive = bandDegreesOfFreedom(k, kept, this.correlation);
        const nuBase = bandDegreesOfFreedom(this.baselineK, kept, this.correlation);
        this.thresholdDb[b] = riseThresholdDb(this.marginDb, this.alpha, nuLive, nuBase);
        this.cachedK[b] = k;
        this.cachedBins[b] = kept;
      }
      // NaN marks "no baseline floor" (q = 0): the band rule never raises on it.
      this.levelDb[b] = q > 0 ? powerRatioDb(p / q) : NaN;
    }
  }
}
