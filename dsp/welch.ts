// Streaming Welch estimator (P. D. Welch, IEEE Trans. Audio Electroacoust. AU-15, 1967) with
// scipy.signal.welch's one-sided conventions: density = 2|X|²/(fs·Σw²), spectrum = 2|X|²/(Σw)², DC and the
// Nyquist bin (segment lengths here are even) not doubled; segments start at sample 0 of the stream (or
// firstSample) and advance by step = segment − noverlap with noverlap = floor(overlap·segment), as scipy's
// integer noverlap; samples that do not yet fill a segment wait for more data.
import { MeanAverager, makeAverager, validateAveraging, type Averager, type AveragingSpec } from './averaging.ts';
import { SegmentConditioner, validateDetrend, type DetrendMode } from './detrend.ts';
import { RealFftPower } from './real-fft-power.ts';
import { makeWindow, type WindowInfo } from './windows.ts';

export type Scaling = 'density' | 'spectrum';

export interface WelchOptions {
  sampleRate: number;
  /** Segment length, a power of two from 64 to 2^20. */
  segment: number;
  /** Window spec for makeWindow, e.g. "hann", "kaiser:3". */
  window: string;
  /** Overlap fraction in [0, 1). */
  overlap: number;
  detrend: DetrendMode;
  scaling?: Scaling;
  averaging?: AveragingSpec;
  /** Absolute index of the first sample pushed (default 0). */
  firstSample?: number;
  /** Averager to use instead of the one `averaging` names (e.g. a median over a whole file); `averaging` still labels it. */
  averager?: Averager;
  /**
   * Called with each completed segment's first and last absolute sample index; false leaves the segment out of the
   * average (counted in segmentsExcluded). For offline reports that drop segments touching clipped samples.
   */
  accept?: (firstSample: number, lastSample: number) => boolean;
}

/**
 * Told of every completed segment: its own one-sided estimate (same scaling as psd()) and the absolute index of
 * its last sample. `estimate` is the estimator's reused buffer, valid only during the call.
 */
export type SegmentListener = (estimate: Float64Array, lastSample: number) => void;

/**
 * Told of every averaged segment's complex DFT X[k], k = 0..N/2, of the detrended, windowed samples (unscaled,
 * interleaved re, im: 2·bins values; a reused buffer valid only during the call), and its last sample index.
 * Cross-spectra of several channels are built from these without a second FFT.
 */
export type SpectrumListener = (spectrum: Float64Array, lastSample: number) => void;

/** Segment lengths the estimator takes (powers of two). */
export const MIN_SEGMENT = 64;
export const MAX_SEGMENT = 1 << 20;

/** Samples between segment starts: segment − floor(overlap·segment), scipy.signal.welch's noverlap rule. */
export function welchStep(segment: number, overlap: number): number {
  return segment - Math.floor(overlap * segment);
}

/** The one-sided bin centres k·fs/N, k = 0..N/2, as scipy.signal.welch returns them. */
export function binFrequencies(sampleRate: number, segment: number): Float64Array {
  const binHz = sampleRate / segment;
  const frequencies = new Float64Array(segment / 2 + 1);
  for (let k = 0; k < frequencies.length; k++) frequencies[k] = k * binHz;
  return frequencies;
}

export class WelchEstimator {
  readonly sampleRate: number;
  readonly segment: number;
  readonly overlap: number;
  /** floor(overlap·segment) samples shared by consecutive segments. */
  readonly noverlap: number;
  /** segment − noverlap: samples between segment starts. */
  readonly step: number;
  readonly detrend: DetrendMode;
  readonly scaling: Scaling;
  readonly averaging: AveragingSpec;
  readonly bins: number;
  readonly binHz: number;
  readonly frequencies: Float64Array;
  readonly window: WindowInfo;

  /** Segments completed since construction or clear(). */
  segmentsTotal = 0;
  /** Absolute index of the last sample of the newest completed segment, −1 if none. */
  lastSegmentSample = -1;
  /** Completed segments that `accept` refused since construction or clear(). */
  segmentsExcluded = 0;

  private readonly fft: RealFftPower;
  private readonly conditioner: SegmentConditioner;
  private readonly averager: Averager;
  private readonly pending: Float64Array;
  private readonly power: Float64Array;
  /** Per-bin factor turning raw |X|² into the one-sided density or spectrum. */
  private readonly scale: Float64Array;
  /** ρ(j·step) for j = 1.. while j·step < segment (Welch 1967, with the window's autocorrelation). */
  private readonly rho: Float64Array;
  private readonly accept: ((firstSample: number, lastSample: number) => boolean) | undefined;
  private fill = 0;
  private nextSample: number;
  private listener: SegmentListener | undefined;
  /** The latest segment's scaled estimate, filled only while a listener is set. */
  private segmentEstimate: Float64Array | undefined;
  private spectrumListener: SpectrumListener | undefined;
  private spectrumBuffer: Float64Array | undefined;

  constructor(options: WelchOptions) {
    const { sampleRate, segment, overlap } = options;
    if (!(Number.isFinite(sampleRate) && sampleRate > 0)) {
      throw new RangeError(
        `WelchEstimator: sampleRate must be a positive number of samples per second, got ${sampleRate}`,
      );
    }
    if (
      !Number.isInteger(segment) ||
      segment < MIN_SEGMENT ||
      segment > MAX_SEGMENT ||
      (segment & (segment - 1)) !== 0
    ) {
      throw new RangeError(
        `WelchEstimator: segment must be a power of two from ${MIN_SEGMENT} to ${MAX_SEGMENT} (2^20), got ${segment}`,
      );
    }
    if (!(Number.isFinite(overlap) && overlap >= 0 && overlap < 1)) {
      throw new RangeError(`WelchEstimator: overlap must be a fraction in [0, 1), e.g. 0.5, got ${overlap}`);
    }
    const firstSample = options.firstSample ?? 0;
    if (!Number.isSafeInteger(firstSample) || firstSample < 0) {
      throw new RangeError(`WelchEstimator: firstSample must be a non-negative integer, got ${firstSample}`);
    }
    const scaling = options.scaling ?? 'density';
    if (scaling !== 'density' && scaling !== 'spectrum') {
      throw new RangeError(`WelchEstimator: scaling "${String(scaling)}" is unknown: choose density or spectrum`);
    }
    this.sampleRate = sampleRate;
    this.segment = segment;
    this.overlap = overlap;
    this.noverlap = Math.floor(overlap * segment);
    this.step = welchStep(segment, overlap);
    this.detrend = validateDetrend(options.detrend);
    this.scaling = scaling;
    this.averaging = validateAveraging(options.averaging ?? { mode: 'mean' });
    this.window = makeWindow(options.window, segment);
    this.bins = segment / 2 + 1;
    this.binHz = sampleRate / segment;
    this.frequencies = binFrequencies(sampleRate, segment);

    this.fft = new RealFftPower(segment);
    this.conditioner = new SegmentConditioner(this.window.values, this.detrend);
    this.averager = options.averager ?? makeAverager(this.averaging, this.bins, this.step / sampleRate);
    this.accept = options.accept;
    this.pending = new Float64Array(segment);
    this.power = new Float64Array(this.bins);
    this.scale = oneSidedScale(this.window.values, sampleRate, scaling);
    this.rho = overlapRho(this.window.values, this.step);
    this.nextSample = firstSample;
  }

  /** Segments in the current estimate (all since clear for mean/exponential/max; at most K for rolling/median). */
  get segmentsUsed(): number {
    return this.averager.used;
  }

  /** Absolute index the next pushed sample will get. */
  get nextSampleIndex(): number {
    return this.nextSample;
  }

  /** Feeds samples[start..end); returns how many segments completed. Allocates nothing. */
  push(samples: Float64Array | Float32Array, start = 0, end = samples.length): number {
    if (!(start >= 0 && end <= samples.length && start <= end) || !Number.isInteger(start) || !Number.isInteger(end)) {
      throw new RangeError(
        `WelchEstimator.push: range [${start}, ${end}) is outside the ${samples.length} samples given`,
      );
    }
    const is64 = samples instanceof Float64Array;
    if (!is64 && !(samples instanceof Float32Array)) {
      throw new TypeError('WelchEstimator.push: samples must be a Float64Array or Float32Array');
    }
    const pending = this.pending;
    const segment = this.segment;
    const step = this.step;
    const base = this.nextSample; // absolute index of samples[start]
    let completed = 0;
    let i = start;
    // Pending path: finish a segment that began in an earlier block (and every segment of Float32 input).
    while (i < end && (this.fill > 0 || !is64)) {
      const take = Math.min(end - i, segment - this.fill);
      if (is64) copy64(samples, i, pending, this.fill, take);
      else copy32(samples as Float32Array, i, pending, this.fill, take);
      this.fill += take;
      i += take;
      this.nextSample += take;
      if (this.fill === segment) {
        this.processSegment(pending, 0, this.nextSample - 1);
        completed++;
        const nextStart = this.nextSample - this.noverlap;
        if (is64 && nextStart >= base) {
          // The next segment lies wholly in this block: read it in place from here on.
          i -= this.noverlap;
          this.fill = 0;
        } else {
          pending.copyWithin(0, step, segment);
          this.fill = this.noverlap;
        }
      }
    }
    if (this.fill === 0 && is64) {
      // Direct path: segments read in place from the caller's array; no copy.
      const x = samples as Float64Array;
      while (i + segment <= end) {
        this.processSegment(x, i, base + (i - start) + segment - 1);
        completed++;
        i += step;
      }
      const rest = end - i;
      copy64(x, i, pending, 0, rest);
      this.fill = rest;
      this.nextSample = base + (end - start);
    }
    return completed;
  }

  /** The one-sided estimate (unit²/Hz or unit²) into out (length ≥ bins, allocated if absent); NaN before any segment. */
  psd(out?: Float64Array): Float64Array {
    const bins = this.bins;
    const result = out ?? new Float64Array(bins);
    if (result.length < bins)
      throw new RangeError(`WelchEstimator.psd: out needs ${bins} values, has ${result.length}`);
    if (this.averager.used === 0) {
      for (let k = 0; k < bins; k++) result[k] = NaN;
      return result;
    }
    this.averager.read(result);
    const scale = this.scale;
    for (let k = 0; k < bins; k++) result[k] *= scale[k];
    return result;
  }

  /**
   * Number of independent averages with the same variance as the current estimate, corrected for the
   * correlation of overlapping segments (Welch 1967): for weights u_i on segments, 1 / Σ_i Σ_j u_i u_j ρ(|i−j|·step)
   * with ρ(s) = (Σ w[n]w[n+s])² / (Σ w²)². Equal weights over K give K / (1 + 2 Σ_j (1 − j/K) ρ(j·step)).
   * Max-hold reports 1 (a maximum is no average); median reports the value for the mean of the same segments.
   */
  equivalentAverages(): number {
    const used = this.averager.used;
    if (used === 0) return 0;
    const mode = this.averaging.mode;
    if (mode === 'max') return 1;
    if (mode === 'exponential') {
      const alpha = 1 - Math.exp(-this.step / (this.sampleRate * this.averaging.tauSeconds));
      return 1 / exponentialVarianceFactor(alpha, used, this.rho);
    }
    return equalWeightEquivalent(used, this.rho);
  }

  /** Sets (or with undefined removes) the one listener told of each completed segment's own estimate. */
  onSegment(listener: SegmentListener | undefined): void {
    this.listener = listener;
    this.segmentEstimate = listener ? (this.segmentEstimate ?? new Float64Array(this.bins)) : undefined;
  }

  /** Sets (or with undefined removes) the one listener told of each averaged segment's complex spectrum. */
  onSpectrum(listener: SpectrumListener | undefined): void {
    this.spectrumListener = listener;
    this.spectrumBuffer = listener ? (this.spectrumBuffer ?? new Float64Array(2 * this.bins)) : undefined;
  }

  /** Drops the partial segment (at a gap); the averages stay. The next sample gets index nextSample if given. */
  reset(nextSample?: number): void {
    if (nextSample !== undefined) {
      if (!Number.isSafeInteger(nextSample) || nextSample < 0) {
        throw new RangeError(`WelchEstimator.reset: nextSample must be a non-negative integer, got ${nextSample}`);
      }
      this.nextSample = nextSample;
    }
    this.fill = 0;
  }

  /** Drops everything: partial segment, averages and counters (the sample index carries on). */
  clear(): void {
    this.fill = 0;
    this.averager.clear();
    this.segmentsTotal = 0;
    this.segmentsExcluded = 0;
    this.lastSegmentSample = -1;
  }

  private processSegment(src: Float64Array, offset: number, lastSample: number): void {
    if (this.accept && !this.accept(lastSample - this.segment + 1, lastSample)) {
      this.segmentsExcluded++;
      this.segmentsTotal++;
      this.lastSegmentSample = lastSample;
      return;
    }
    const c = this.conditioner;
    c.fit(src, offset);
    const avg = this.averager;
    const listener = this.listener;
    if (listener) {
      // The segment's own power is needed apart from the average: same additions as the fast path below.
      this.fft.windowedPower(src, offset, this.window.values, c.mean, c.slope, this.power, false, this.spectrumBuffer);
      avg.add(this.power);
      const est = this.segmentEstimate!;
      const power = this.power;
      const scale = this.scale;
      for (let k = 0; k < est.length; k++) est[k] = power[k] * scale[k];
      this.segmentsTotal++;
      this.lastSegmentSample = lastSample;
      listener(est, lastSample);
      this.tellSpectrum(lastSample);
      return;
    }
    if (avg instanceof MeanAverager) {
      // Mean: add |X|² straight into the running sum (same additions as add(), one pass fewer).
      this.fft.windowedPower(src, offset, this.window.values, c.mean, c.slope, avg.sum, true, this.spectrumBuffer);
      avg.countAdded();
    } else {
      this.fft.windowedPower(src, offset, this.window.values, c.mean, c.slope, this.power, false, this.spectrumBuffer);
      avg.add(this.power);
    }
    this.segmentsTotal++;
    this.lastSegmentSample = lastSample;
    this.tellSpectrum(lastSample);
  }

  private tellSpectrum(lastSample: number): void {
    const listener = this.spectrumListener;
    if (!listener) return;
    listener(this.spectrumBuffer!, lastSample);
  }
}

function copy64(src: Float64Array, from: number, dst: Float64Array, to: number, n: number): void {
  for (let i = 0; i < n; i++) dst[to + i] = src[from + i];
}

function copy32(src: Float32Array, from: number, dst: Float64Array, to: number, n: number): void {
  for (let i = 0; i < n; i++) dst[to + i] = src[from + i];
}

// scipy.signal.welch: scale = 1/(fs·Σw²) (density) or 1/(Σw)² (spectrum); bins 1..N/2−1 doubled for even N.
export function oneSidedScale(w: Float64Array, sampleRate: number, scaling: Scaling): Float64Array {
  let sum = 0;
  let sumSq = 0;
  for (let i = 0; i < w.length; i++) {
    sum += w[i];
    sumSq += w[i] * w[i];
  }
  const base = scaling === 'density' ? 1 / (sampleRate * sumSq) : 1 / (sum * sum);
  const bins = w.length / 2 + 1;
  const scale = new Float64Array(bins);
  for (let k = 0; k < bins; k++) scale[k] = k === 0 || k === bins - 1 ? base : 2 * base;
  return scale;
}

/** ρ(j·step) = (Σ w[n]w[n+j·step])² / (Σw²)² for j = 1, 2, ... while j·step < N. */
export function overlapRho(w: Float64Array, step: number): Float64Array {
  const n = w.length;
  let sumSq = 0;
  for (let i = 0; i < n; i++) sumSq += w[i] * w[i];
  const lags = Math.ceil(n / step) - 1;
  const rho = new Float64Array(Math.max(0, lags));
  for (let j = 1; j <= lags; j++) {
    const s = j * step;
    let c = 0;
    for (let i = 0; i + s < n; i++) c += w[i] * w[i + s];
    rho[j - 1] = (c * c) / (sumSq * sumSq);
  }
  return rho;
}

/**
 * K / (1 + 2 Σ_{j=1}^{K−1} (1 − j/K) ρ_j)  (Welch 1967; Heinzel 2002 sec. 10): the overlap-corrected number of
 * averages of K equally weighted segments. ρ is read from rho[offset .. offset+lags) (packed tables of several
 * windows, as the log-frequency estimator keeps them, need no views).
 */
export function equalWeightEquivalent(k: number, rho: Float64Array, offset = 0, lags = rho.length - offset): number {
  let s = 0;
  const n = Math.min(lags, k - 1);
  for (let j = 1; j <= n; j++) s += (1 - j / k) * rho[offset + j - 1];
  return k / (1 + 2 * s);
}

// Variance of an exponential average of n segments relative to one periodogram. Weights by age a (0 = newest):
// u_a = α r^a for a < n−1 and u_{n−1} = r^{n−1} (the first segment initialises), r = 1 − α. Closed forms of the
// geometric sums S(d) = Σ_a u_a u_{a+d}; V = S(0) + 2 Σ_d ρ_d S(d).
export function exponentialVarianceFactor(alpha: number, n: number, rho: Float64Array): number {
  const r = 1 - alpha;
  const r2 = r * r;
  const geo = (m: number): number => (m <= 0 ? 0 : r2 === 1 ? m : (1 - r2 ** m) / (1 - r2)); // Σ_{a<m} r^{2a}
  const last = r ** (n - 1);
  let v = alpha * alpha * geo(n - 1) + last * last;
  const lags = Math.min(rho.length, n - 1);
  for (let d = 1; d <= lags; d++) {
    const sd = alpha * alpha * r ** d * geo(n - 1 - d) + alpha * r ** (n - 1 - d) * last;
    v += 2 * rho[d - 1] * sd;
  }
  return v;
}
