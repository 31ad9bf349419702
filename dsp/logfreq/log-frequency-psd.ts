// Offline log-frequency spectral density of a whole record (Tröbs & Heinzel 2006): at each planned frequency,
// average |X(m)|² over that point's own segments, with Welch's scaling (P. D. Welch 1967; the one-sided density
// of scipy.signal.welch: 2·|X|²/(fs·Σw²), DC and an exact Nyquist bin not doubled). Segments start at sample 0
// and step by D_j, leftovers at the end are unused, as in scipy.signal.welch.
import { makeWindow } from '../windows.ts';
import type { LogFrequencyPlan } from './plan.ts';
import { SingleBinKernel, type SegmentDetrend } from './single-bin-dft.ts';
import { equalWeightEquivalent, overlapRho } from '../welch.ts';

export interface LogFrequencyPsdOptions {
  detrend?: SegmentDetrend;
  /** 'density' (unit²/Hz, default) or 'spectrum' (unit², a line's RMS² at its own frequency). */
  scaling?: 'density' | 'spectrum';
  /** Absolute index of samples[0]; the result's `sample` is counted from it. Default 0. */
  firstSample?: number;
}

export interface LogFrequencySpectrum {
  readonly sampleRate: number;
  readonly window: string;
  readonly overlap: number;
  readonly detrend: SegmentDetrend;
  readonly scaling: 'density' | 'spectrum';
  readonly frequency: Float64Array;
  /** Density (unit²/Hz) or spectrum (unit²) per point. */
  readonly psd: Float64Array;
  /** Segment length per point, samples. */
  readonly segment: Float64Array;
  /** Segments averaged per point. */
  readonly averages: Float64Array;
  /** Averages corrected for segment overlap (Welch 1967): use for the statistics of each point. */
  readonly equivalentAverages: Float64Array;
  /** Resolution bandwidth per point: the window's ENBW nenbw·fs/L_j, Hz. */
  readonly rbwHz: Float64Array;
  /** Absolute index of the last sample any point used, and its sample time. */
  readonly sample: number;
  readonly t: number;
}

/** Computes the whole estimate. Allocates (one kernel sized to the longest segment, one window per point). */
export function logFrequencyPsd(
  samples: Float64Array | Float32Array,
  plan: LogFrequencyPlan,
  options: LogFrequencyPsdOptions = {},
): LogFrequencySpectrum {
  const detrend = options.detrend ?? 'mean';
  if (detrend !== 'none' && detrend !== 'mean' && detrend !== 'linear') {
    throw new RangeError(`log-frequency PSD: detrend must be none, mean or linear, got '${String(detrend)}'`);
  }
  const scaling = options.scaling ?? 'density';
  if (scaling !== 'density' && scaling !== 'spectrum') {
    throw new RangeError(`log-frequency PSD: scaling must be density or spectrum, got '${String(scaling)}'`);
  }
  if (samples.length !== plan.samples) {
    throw new RangeError(
      `log-frequency PSD: the plan is for ${plan.samples} samples but the record has ${samples.length}; plan again for this record`,
    );
  }
  const x = detrend === 'none' ? toFloat64(samples) : withoutMean(samples);
  const fs = plan.sampleRate;
  const count = plan.count;
  let longest = 2;
  for (let j = 0; j < count; j++) longest = Math.max(longest, plan.segment[j]);
  const kernel = new SingleBinKernel(longest);
  const psd = new Float64Array(count);
  const eqAvg = new Float64Array(count);
  const rbw = new Float64Array(count);
  let lastUsed = -1;
  let cachedLength = 0;
  let w: Float64Array = new Float64Array(0);
  let nenbw = 0;
  for (let j = 0; j < count; j++) {
    const len = plan.segment[j];
    const step = plan.step[j];
    const k = plan.averages[j];
    const m = plan.bin[j];
    if (len !== cachedLength) {
      const info = makeWindow(plan.window, len);
      w = info.values;
      nenbw = info.nenbw;
      cachedLength = len;
    }
    kernel.build(w, m);
    let total = 0;
    for (let s = 0; s < k; s++) total += kernel.power(x, s * step, detrend);
    // DC and the Nyquist bin of an even segment are their own mirror images: not doubled (scipy.signal.welch).
    const edge = m === 0 || (len % 2 === 0 && m === len / 2);
    const sides = edge ? 1 : 2;
    const norm = scaling === 'density' ? fs * kernel.sumSq : kernel.sum * kernel.sum;
    psd[j] = (sides * total) / (k * norm);
    eqAvg[j] = equalWeightEquivalent(k, overlapRho(w, step));
    rbw[j] = (nenbw * fs) / len;
    lastUsed = Math.max(lastUsed, (k - 1) * step + len - 1);
  }
  const first = options.firstSample ?? 0;
  const sample = first + lastUsed;
  return {
    sampleRate: fs,
    window: plan.window,
    overlap: plan.overlap,
    detrend,
    scaling,
    frequency: Float64Array.from(plan.frequency),
    psd,
    segment: Float64Array.from(plan.segment),
    averages: Float64Array.from(plan.averages),
    equivalentAverages: eqAvg,
    rbwHz: rbw,
    sample,
    t: sample / fs,
  };
}

function toFloat64(samples: Float64Array | Float32Array): Float64Array {
  return samples instanceof Float64Array ? samples : Float64Array.from(samples);
}

// Mean and linear detrending remove any constant exactly, so taking the record's mean out first changes nothing
// in exact arithmetic; it keeps a large DC offset (a bridge at 1 V with nV noise) from cancelling digits when the
// segment mean is removed after the sum (A − mean·C0).
function withoutMean(samples: Float64Array | Float32Array): Float64Array {
  const n = samples.length;
  let sum = 0;
  for (let i = 0; i < n; i++) sum += samples[i];
  const mean = sum / n;
  const out = new Float64Array(n);
  for (let i = 0; i < n; i++) out[i] = samples[i] - mean;
  return out;
}
