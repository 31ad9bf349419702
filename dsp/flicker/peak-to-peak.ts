// 0.1–10 Hz peak-to-peak noise, the way datasheets specify low-frequency noise (common practice): a 2nd-order
// Butterworth high-pass at 0.1 Hz and a 4th-order Butterworth low-pass at 10 Hz, then the extremes over an
// observation window (default 10 s) once the filter has settled. Three figures, each labelled: the true
// max − min, the RMS, and 6.6 × σ, the Gaussian-equivalent peak-to-peak (±3.3σ holds 99.9 % of a Gaussian's
// samples, erf(3.3/√2) = 0.99903; common practice).
import { butterworthSos, cascadeSos, settleSamples, type SosFilter } from '../filters/butterworth.ts';
import { SosCascade } from '../filters/sos-filter.ts';

export const PEAK_TO_PEAK_LABELS = {
  peakToPeak: 'peak-to-peak (max − min)',
  rms: 'RMS',
  gaussianPeakToPeak: '6.6σ (Gaussian-equivalent peak-to-peak)',
} as const;

/** The Gaussian factor: peak-to-peak ≈ 6.6 × σ (common practice). */
export const GAUSSIAN_PEAK_TO_PEAK_FACTOR = 6.6;

export interface PeakToPeakOptions {
  sampleRate: number;
  /** High-pass corner, Hz (default 0.1) and order (default 2). */
  lowHz?: number;
  highPassOrder?: number;
  /** Low-pass corner, Hz (default 10) and order (default 4). */
  highHz?: number;
  lowPassOrder?: number;
  /** Observation window, seconds of sample time (default 10). */
  windowSeconds?: number;
  /** Samples skipped before the first window. Default: until the slowest pole has decayed to 1e-3. */
  settleSeconds?: number;
  /** Absolute index of the first pushed sample (default 0). */
  firstSample?: number;
  /** Start the filter as if the first sample had been held forever (default), or from zero as sosfilt without zi. */
  initialState?: 'steady' | 'zero';
  /** Called once per completed window with a reading object that is reused: copy what you keep. */
  onWindow?: (reading: PeakToPeakReading) => void;
}

export interface PeakToPeakReading {
  /** Absolute index of the window's first and last sample, and the last one's sample time. */
  startSample: number;
  sample: number;
  t: number;
  windowSeconds: number;
  max: number;
  min: number;
  peakToPeak: number;
  /** Root mean square of the filtered signal (about zero). */
  rms: number;
  /** Standard deviation about the window's mean. */
  sigma: number;
  gaussianPeakToPeak: number;
}

/** The figures a report or the dashboard shows of one window: its span and the three labelled levels. */
export type PeakToPeakFigures = Pick<
  PeakToPeakReading,
  'startSample' | 'sample' | 't' | 'peakToPeak' | 'rms' | 'gaussianPeakToPeak'
>;

export function peakToPeakFigures(r: PeakToPeakReading): PeakToPeakFigures {
  return {
    startSample: r.startSample,
    sample: r.sample,
    t: r.t,
    peakToPeak: r.peakToPeak,
    rms: r.rms,
    gaussianPeakToPeak: r.gaussianPeakToPeak,
  };
}

export class PeakToPeakMeter {
  readonly sampleRate: number;
  readonly filter: SosFilter;
  readonly windowSamples: number;
  readonly settleSamples: number;
  /** Completed windows so far; `latest` holds the newest. */
  windows = 0;
  readonly latest: PeakToPeakReading;
  private readonly cascade: SosCascade;
  private readonly initialState: 'steady' | 'zero';
  private readonly onWindow: ((r: PeakToPeakReading) => void) | undefined;
  private nextSample: number;
  private seen = 0;
  private count = 0;
  private max = -Infinity;
  private min = Infinity;
  private sumSq = 0;
  private mean = 0;
  private m2 = 0;

  constructor(options: PeakToPeakOptions) {
    const fs = options.sampleRate;
    if (!(fs > 0) || !Number.isFinite(fs))
      throw new RangeError(`peak-to-peak: sampleRate must be a positive number of Hz, got ${fs}`);
    const lo = options.lowHz ?? 0.1;
    const hi = options.highHz ?? 10;
    if (!(lo > 0 && hi > lo)) throw new RangeError(`peak-to-peak: need 0 < lowHz < highHz, got ${lo} and ${hi}`);
    if (!(hi < fs / 2)) {
      throw new RangeError(
        `peak-to-peak: the ${hi} Hz low-pass needs a sample rate above ${2 * hi} Hz, got ${fs}; resample or lower highHz`,
      );
    }
    const windowSeconds = options.windowSeconds ?? 10;
    if (!(windowSeconds > 0) || !Number.isFinite(windowSeconds)) {
      throw new RangeError(`peak-to-peak: windowSeconds must be a positive number, got ${windowSeconds}`);
    }
    this.sampleRate = fs;
    this.filter = cascadeSos(
      butterworthSos('highpass', options.highPassOrder ?? 2, lo, fs),
      butterworthSos('lowpass', options.lowPassOrder ?? 4, hi, fs),
    );
    this.cascade = new SosCascade(this.filter);
    this.windowSamples = Math.max(2, Math.round(windowSeconds * fs));
    const settle = options.settleSeconds;
    if (settle !== undefined && !(settle >= 0 && Number.isFinite(settle))) {
      throw new RangeError(`peak-to-peak: settleSeconds must be a number ≥ 0, got ${settle}`);
    }
    this.settleSamples = settle === undefined ? settleSamples(this.filter, 1e-3) : Math.round(settle * fs);
    this.initialState = options.initialState ?? 'steady';
    if (this.initialState !== 'steady' && this.initialState !== 'zero') {
      throw new RangeError(`peak-to-peak: initialState must be 'steady' or 'zero', got '${String(this.initialState)}'`);
    }
    this.onWindow = options.onWindow;
    this.nextSample = options.firstSample ?? 0;
    this.latest = {
      startSample: -1,
      sample: -1,
      t: 0,
      windowSeconds: this.windowSamples / fs,
      max: NaN,
      min: NaN,
      peakToPeak: NaN,
      rms: NaN,
      sigma: NaN,
      gaussianPeakToPeak: NaN,
    };
  }

  /** Seconds of sample time the filter is given to settle before the first window. */
  get settleSeconds(): number {
    return this.settleSamples / this.sampleRate;
  }

  /** Feeds samples[start..end); returns how many windows completed. Allocates nothing. */
  push(samples: Float64Array, start = 0, end = samples.length): number {
    const cascade = this.cascade;
    const settle = this.settleSamples;
    const win = this.windowSamples;
    let done = 0;
    let seen = this.seen;
    let count = this.count;
    let max = this.max;
    let min = this.min;
    let sumSq = this.sumSq;
    let mean = this.mean;
    let m2 = this.m2;
    for (let i = start; i < end; i++) {
      if (seen === 0 && this.initialState === 'steady') cascade.settleTo(samples[i]);
      const y = cascade.step(samples[i]);
      seen++;
      if (seen <= settle) continue;
      count++;
      if (y > max) max = y;
      if (y < min) min = y;
      sumSq += y * y;
      // Welford's one-pass mean and variance.
      const d = y - mean;
      mean += d / count;
      m2 += d * (y - mean);
      if (count === win) {
        const r = this.latest;
        const last = this.nextSample + (i - start);
        r.sample = last;
        r.startSample = last - win + 1;
        r.t = last / this.sampleRate;
        r.max = max;
        r.min = min;
        r.peakToPeak = max - min;
        r.rms = Math.sqrt(sumSq / win);
        r.sigma = Math.sqrt(m2 / win);
        r.gaussianPeakToPeak = GAUSSIAN_PEAK_TO_PEAK_FACTOR * r.sigma;
        this.windows++;
        done++;
        count = 0;
        max = -Infinity;
        min = Infinity;
        sumSq = 0;
        mean = 0;
        m2 = 0;
        if (this.onWindow) this.onWindow(r);
      }
    }
    this.nextSample += end - start;
    this.seen = seen;
    this.count = count;
    this.max = max;
    this.min = min;
    this.sumSq = sumSq;
    this.mean = mean;
    this.m2 = m2;
    return done;
  }
}
