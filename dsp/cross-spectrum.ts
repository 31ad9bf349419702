// Cross-spectral density and magnitude-squared coherence of two channels by segment averaging, with
// scipy.signal.csd / scipy.signal.coherence conventions for the same settings: Pxy = mean over segments of
// conj(X)·Y scaled 1/(fs·Σw²), bins 1..N/2−1 doubled (one-sided, even N), and coherence |Pxy|²/(Pxx·Pyy) with Pxx,
// Pyy the mean auto-spectra of the same segments (Carter, Knapp & Nuttall 1973). Always a mean: scipy's coherence
// has no median. Segments start at the first sample pushed and advance by step = N − floor(overlap·N).
import type { DetrendMode } from './detrend.ts';
import { SegmentConditioner } from './detrend.ts';
import { RealFft } from './rfft.ts';
import { makeWindow } from './windows.ts';

export interface CrossSpectrumOptions {
  sampleRate: number;
  segment: number;
  window: string;
  overlap: number;
  detrend: DetrendMode;
  firstSample?: number;
  /** As WelchEstimator's: false leaves a segment out (both channels). */
  accept?: (firstSample: number, lastSample: number) => boolean;
}

export interface CrossSpectrumResult {
  csdRe: Float64Array;
  csdIm: Float64Array;
  coherence: Float64Array;
  segments: number;
}

export class CrossSpectrum {
  readonly segment: number;
  readonly step: number;
  readonly bins: number;
  /** Segments averaged (accepted). */
  used = 0;
  private readonly fft: RealFft;
  private readonly condX: SegmentConditioner;
  private readonly condY: SegmentConditioner;
  private readonly pendX: Float64Array;
  private readonly pendY: Float64Array;
  private readonly wx: Float64Array;
  private readonly wy: Float64Array;
  private readonly fx: Float64Array;
  private readonly fy: Float64Array;
  private readonly sxx: Float64Array;
  private readonly syy: Float64Array;
  private readonly sxyRe: Float64Array;
  private readonly sxyIm: Float64Array;
  private readonly scale: Float64Array;
  private readonly accept: CrossSpectrumOptions['accept'];
  private fill = 0;
  private nextSample: number;

  constructor(o: CrossSpectrumOptions) {
    const n = o.segment;
    const w = makeWindow(o.window, n).values;
    this.segment = n;
    this.step = n - Math.floor(o.overlap * n);
    this.bins = n / 2 + 1;
    this.fft = new RealFft(n);
    this.condX = new SegmentConditioner(w, o.detrend);
    this.condY = new SegmentConditioner(w, o.detrend);
    this.pendX = new Float64Array(n);
    this.pendY = new Float64Array(n);
    this.wx = new Float64Array(n);
    this.wy = new Float64Array(n);
    this.fx = new Float64Array(n + 2);
    this.fy = new Float64Array(n + 2);
    this.sxx = new Float64Array(this.bins);
    this.syy = new Float64Array(this.bins);
    this.sxyRe = new Float64Array(this.bins);
    this.sxyIm = new Float64Array(this.bins);
    let sumSq = 0;
    for (let i = 0; i < n; i++) sumSq += w[i] * w[i];
    const base = 1 / (o.sampleRate * sumSq);
    this.scale = new Float64Array(this.bins);
    for (let k = 0; k < this.bins; k++) this.scale[k] = k === 0 || k === this.bins - 1 ? base : 2 * base;
    this.accept = o.accept;
    this.nextSample = o.firstSample ?? 0;
  }

  /** Feeds x[start..end) and y[start..end) (the same instants of the two channels). Allocates nothing. */
  push(x: Float64Array, y: Float64Array, start: number, end: number): void {
    const n = this.segment;
    let i = start;
    while (i < end) {
      const take = Math.min(end - i, n - this.fill);
      for (let j = 0; j < take; j++) {
        this.pendX[this.fill + j] = x[i + j];
        this.pendY[this.fill + j] = y[i + j];
      }
      this.fill += take;
      i += take;
      this.nextSample += take;
      if (this.fill === n) {
        const last = this.nextSample - 1;
        if (!this.accept || this.accept(last - n + 1, last)) this.addSegment();
        this.pendX.copyWithin(0, this.step, n);
        this.pendY.copyWithin(0, this.step, n);
        this.fill = n - this.step;
      }
    }
  }

  private addSegment(): void {
    this.condX.apply(this.pendX, 0, this.wx);
    this.condY.apply(this.pendY, 0, this.wy);
    this.fft.transform(this.wx, this.fx);
    this.fft.transform(this.wy, this.fy);
    const fx = this.fx;
    const fy = this.fy;
    for (let k = 0, j = 0; k < this.bins; k++, j += 2) {
      const ar = fx[j];
      const ai = fx[j + 1];
      const br = fy[j];
      const bi = fy[j + 1];
      this.sxx[k] += ar * ar + ai * ai;
      this.syy[k] += br * br + bi * bi;
      // conj(X)·Y
      this.sxyRe[k] += ar * br + ai * bi;
      this.sxyIm[k] += ar * bi - ai * br;
    }
    this.used++;
  }

  /** The averaged CSD (unitA·unitB/Hz) and coherence; NaN before any segment. */
  result(): CrossSpectrumResult {
    const bins = this.bins;
    const csdRe = new Float64Array(bins);
    const csdIm = new Float64Array(bins);
    const coherence = new Float64Array(bins);
    const inv = 1 / this.used;
    for (let k = 0; k < bins; k++) {
      const s = this.scale[k] * inv;
      const re = this.sxyRe[k] * s;
      const im = this.sxyIm[k] * s;
      csdRe[k] = re;
      csdIm[k] = im;
      coherence[k] = (re * re + im * im) / (this.sxx[k] * s * (this.syy[k] * s));
    }
    return { csdRe, csdIm, coherence, segments: this.used };
  }
}
