// Live band power against a baseline, with the rise threshold from the statistics of both estimates
// (see threshold.ts). Bands select bins whose centre f satisfies low ≤ f ≤ high, as band RMS does.
import { bandDegreesOfFreedom, riseThresholdDb } from './threshold.ts';

export interface BandSpec {
  low: number;
  high: number;
}

export interface BandCompareOptions {
  frequencies: Float64Array;
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
  private readonly nuBase: Float64Array;
  private readonly binsIn: Int32Array;
  private readonly correlation: Float64Array;
  private readonly marginDb: number;
  private readonly alpha: number;
  private cachedLiveK = -1;

  constructor(o: BandCompareOptions) {
    const f = o.frequencies;
    if (o.baselinePsd.length !== f.length) {
      throw new RangeError(`BandCompare: baseline has ${o.baselinePsd.length} bins, spectrum has ${f.length}; take the baseline with the same segment`);
    }
    const n = o.bands.length;
    this.bands = o.bands;
    this.firstBin = new Int32Array(n);
    this.lastBin = new Int32Array(n);
    this.binsIn = new Int32Array(n);
    this.baselinePower = new Float64Array(n);
    this.nuBase = new Float64Array(n);
    this.levelDb = new Float64Array(n);
    this.thresholdDb = new Float64Array(n);
    this.correlation = o.correlation;
    this.marginDb = o.marginDb;
    this.alpha = o.alpha;
    for (let b = 0; b < n; b++) {
      const { low, high } = o.bands[b];
      if (!(low >= 0) || !(high >= low)) throw new RangeError(`BandCompare: band ${low}:${high} Hz must have 0 ≤ low ≤ high`);
      let lo = 0;
      while (lo < f.length && f[lo] < low) lo++;
      let hi = f.length - 1;
      while (hi >= 0 && f[hi] > high) hi--;
      if (hi < lo) throw new RangeError(`BandCompare: band ${low}:${high} Hz holds no bin centre (bins are ${f[1] - f[0]} Hz apart); widen it`);
      this.firstBin[b] = lo;
      this.lastBin[b] = hi;
      this.binsIn[b] = hi - lo + 1;
      let p = 0;
      for (let k = lo; k <= hi; k++) p += o.baselinePsd[k];
      if (!(p > 0)) throw new RangeError(`BandCompare: baseline power in band ${low}:${high} Hz is ${p}; a floor must be positive`);
      this.baselinePower[b] = p;
      this.nuBase[b] = bandDegreesOfFreedom(o.baselineEquivalentAverages, this.binsIn[b], o.correlation);
    }
  }

  /** Fills levelDb and thresholdDb for a live density with `liveK` equivalent averages. */
  evaluate(psd: Float64Array, liveK: number): void {
    const n = this.bands.length;
    if (liveK !== this.cachedLiveK) {
      for (let b = 0; b < n; b++) {
        const nuLive = bandDegreesOfFreedom(liveK, this.binsIn[b], this.correlation);
        this.thresholdDb[b] = riseThresholdDb(this.marginDb, this.alpha, nuLive, this.nuBase[b]);
      }
      this.cachedLiveK = liveK;
    }
    for (let b = 0; b < n; b++) {
      const hi = this.lastBin[b];
      let p = 0;
      for (let k = this.firstBin[b]; k <= hi; k++) p += psd[k];
      this.levelDb[b] = 10 * Math.log10(p / this.baselinePower[b]);
    }
  }
}
