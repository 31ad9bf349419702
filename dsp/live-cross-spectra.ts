// Averaged cross-spectra of channel pairs from the complex segment spectra the per-channel Welch estimators already
// compute (WelchEstimator.onSpectrum): per channel the auto-spectrum Σ|X|², per pair the cross-spectrum Σ conj(X)·Y,
// all with one averaging, so the magnitude-squared coherence |Sxy|²/(Sxx·Syy) (Carter, Knapp & Nuttall 1973) is a
// proper ratio of averages of the same segments and stays within [0, 1] (Cauchy–Schwarz). The averages are linear
// (mean, rolling, exponential), applied to re and im alike; a median or a max-hold of complex values has no meaning,
// so `crossAveraging` maps median K to the rolling mean of the same K segments and max-hold to the mean.
// Conventions as scipy.signal.csd / coherence (one-sided density, bins 1..N/2−1 doubled). Nothing allocated per segment.
import { makeAverager, type Averager, type AveragingSpec } from './averaging.ts';
import { equalWeightEquivalent, exponentialVarianceFactor, oneSidedScale, overlapRho, welchStep } from './welch.ts';
import { makeWindow } from './windows.ts';

export interface CrossSpectraOptions {
  sampleRate: number;
  segment: number;
  window: string;
  overlap: number;
  averaging: AveragingSpec;
  channels: number;
  /** Channel index pairs [a, b], a ≠ b; the cross-spectrum is conj(X_a)·X_b as scipy.signal.csd(a, b). */
  pairs: readonly (readonly [number, number])[];
}

/** The linear averaging the cross-spectra use for a live averaging (see the file comment). */
export function crossAveraging(spec: AveragingSpec): AveragingSpec {
  if (spec.mode === 'median') return { mode: 'rolling', count: spec.count };
  if (spec.mode === 'max') return { mode: 'mean' };
  return spec;
}

export class CrossSpectraAverager {
  readonly bins: number;
  readonly pairs: readonly (readonly [number, number])[];
  readonly averaging: AveragingSpec;
  private readonly auto: Averager[];
  /** Per pair: interleaved (re, im) rows of 2·bins. */
  private readonly cross: Averager[];
  private readonly power: Float64Array;
  private readonly product: Float64Array;
  private readonly autoA: Float64Array;
  private readonly autoB: Float64Array;
  private readonly crossRow: Float64Array;
  private readonly scale: Float64Array;
  private readonly rho: Float64Array;
  private readonly alpha: number;

  constructor(o: CrossSpectraOptions) {
    const win = makeWindow(o.window, o.segment);
    const step = welchStep(o.segment, o.overlap);
    const hop = step / o.sampleRate;
    this.bins = o.segment / 2 + 1;
    for (const [a, b] of o.pairs) {
      if (!(
        Number.isInteger(a) &&
        Number.isInteger(b) &&
        a >= 0 &&
        b >= 0 &&
        a < o.channels &&
        b < o.channels &&
        a !== b
      ))
        throw new RangeError(
          `CrossSpectraAverager: pair [${a}, ${b}] must name two different channels of ${o.channels}`,
        );
    }
    this.pairs = o.pairs.map(([a, b]) => [a, b] as const);
    this.averaging = crossAveraging(o.averaging);
    this.auto = Array.from({ length: o.channels }, () => makeAverager(this.averaging, this.bins, hop));
    this.cross = this.pairs.map(() => makeAverager(this.averaging, 2 * this.bins, hop));
    this.power = new Float64Array(this.bins);
    this.product = new Float64Array(2 * this.bins);
    this.autoA = new Float64Array(this.bins);
    this.autoB = new Float64Array(this.bins);
    this.crossRow = new Float64Array(2 * this.bins);
    this.scale = oneSidedScale(win.values, o.sampleRate, 'density');
    this.rho = overlapRho(win.values, step);
    this.alpha = this.averaging.mode === 'exponential' ? 1 - Math.exp(-hop / this.averaging.tauSeconds) : Number.NaN;
  }

  /** Segments in the current estimate. */
  get used(): number {
    return this.auto.length ? this.auto[0].used : 0;
  }

  /** One segment of every channel (spectra[c]: X[k] interleaved, 2·bins values, the same instants). */
  add(spectra: readonly Float64Array[]): void {
    const bins = this.bins;
    const power = this.power;
    for (let c = 0; c < this.auto.length; c++) {
      const x = spectra[c];
      for (let k = 0, j = 0; k < bins; k++, j += 2) power[k] = x[j] * x[j] + x[j + 1] * x[j + 1];
      this.auto[c].add(power);
    }
    const p = this.product;
    for (let i = 0; i < this.pairs.length; i++) {
      const x = spectra[this.pairs[i][0]];
      const y = spectra[this.pairs[i][1]];
      for (let j = 0; j < 2 * bins; j += 2) {
        const ar = x[j];
        const ai = x[j + 1];
        const br = y[j];
        const bi = y[j + 1];
        // conj(X)·Y
        p[j] = ar * br + ai * bi;
        p[j + 1] = ar * bi - ai * br;
      }
      this.cross[i].add(p);
    }
  }

  /**
   * Pair i's cross-spectral density (unit_a·unit_b/Hz, scipy.signal.csd 'density' one-sided) into re/im and its
   * magnitude-squared coherence into coherence (each length ≥ bins); NaN before any segment. Each average read once.
   */
  pairInto(i: number, re: Float64Array, im: Float64Array, coherence: Float64Array): void {
    const bins = this.bins;
    if (this.used === 0) {
      re.fill(Number.NaN, 0, bins);
      im.fill(Number.NaN, 0, bins);
      coherence.fill(Number.NaN, 0, bins);
      return;
    }
    const [a, b] = this.pairs[i];
    this.auto[a].read(this.autoA);
    this.auto[b].read(this.autoB);
    this.cross[i].read(this.crossRow);
    const xa = this.autoA;
    const xb = this.autoB;
    const c = this.crossRow;
    const s = this.scale;
    for (let k = 0, j = 0; k < bins; k++, j += 2) {
      coherence[k] = (c[j] * c[j] + c[j + 1] * c[j + 1]) / (xa[k] * xb[k]);
      re[k] = c[j] * s[k];
      im[k] = c[j + 1] * s[k];
    }
  }

  /**
   * Equivalent independent averages of the estimate, overlap-corrected as WelchEstimator.equivalentAverages
   * (Welch 1967): the n of the coherence estimate's significance bound.
   */
  equivalentAverages(): number {
    const used = this.used;
    if (used === 0) return 0;
    if (this.averaging.mode === 'exponential') return 1 / exponentialVarianceFactor(this.alpha, used, this.rho);
    return equalWeightEquivalent(used, this.rho);
  }

  clear(): void {
    for (const a of this.auto) a.clear();
    for (const c of this.cross) c.clear();
  }
}
