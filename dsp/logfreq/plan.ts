// The frequency grid of a log-frequency spectral density: for each frequency its own segment length, chosen so
// the resolution follows the log spacing where the record allows it and a desired number of averages where it
// does not. Method: M. Tröbs and G. Heinzel, "Improved spectrum estimation from digitized time series on a
// logarithmic frequency axis", Measurement 39 (2006) 120–129. The compromise rule and the recomputed step below
// are implemented as we recall the paper's algorithm (from memory), not copied from any implementation.
import { makeWindow } from '../windows.ts';

export interface LogFrequencyPlanOptions {
  sampleRate: number;
  /** Record length N in samples (offline: the whole record; live: the span each point averages over). */
  samples: number;
  /** Lowest frequency, Hz. Default: the lowest one the record resolves (minBin·fs/N). */
  minFrequency?: number;
  /** Highest frequency, Hz. Default fs/2. */
  maxFrequency?: number;
  /** Desired number of frequencies J (the grid ends near it). Default 200. */
  points?: number;
  /** Desired number of averages K per frequency. Default 100. */
  averages?: number;
  /** Window spec for dsp/windows.ts. Default 'hann'. */
  window?: string;
  /** Segment overlap fraction in [0, 1). Default: the window's recommended overlap (Heinzel's ROV). */
  overlap?: number;
  /** Smallest allowed bin number m = f·L/fs, so a point's main lobe stays clear of DC. Default: the window's
   * main-lobe half-width (2 for Hann). */
  minBin?: number;
}

export interface LogFrequencyPlan {
  readonly sampleRate: number;
  readonly samples: number;
  readonly window: string;
  readonly overlap: number;
  readonly count: number;
  /** Frequency of each point, Hz. */
  readonly frequency: Float64Array;
  /** Segment length L_j, samples. */
  readonly segment: Float64Array;
  /** Segment step D_j = L_j − floor(overlap·L_j) (scipy.signal.welch's noverlap = floor(overlap·L)). */
  readonly step: Float64Array;
  /** Bin number m_j = f_j·L_j/fs (not an integer in general: the DFT is evaluated at exactly f_j). */
  readonly bin: Float64Array;
  /** Frequency resolution fs/L_j, Hz (bin width; the noise bandwidth is nenbw times this). */
  readonly resolutionHz: Float64Array;
  /** Number of segments K_j that fit in `samples`. */
  readonly averages: Float64Array;
}

const MIN_SEGMENT = 8;

/** Builds the log-spaced grid. Throws RangeError naming the option and the fix. */
export function planLogFrequencies(options: LogFrequencyPlanOptions): LogFrequencyPlan {
  const fs = options.sampleRate;
  const n = options.samples;
  if (!(fs > 0) || !Number.isFinite(fs))
    throw new RangeError(`log-frequency plan: sampleRate must be a positive number of Hz, got ${fs}`);
  if (!Number.isInteger(n) || n < 2 * MIN_SEGMENT) {
    throw new RangeError(
      `log-frequency plan: a record of ${n} samples is too short; give at least ${2 * MIN_SEGMENT} samples (a longer recording)`,
    );
  }
  const windowSpec = options.window ?? 'hann';
  const probe = makeWindow(windowSpec, 64);
  const overlap = options.overlap ?? probe.recommendedOverlap;
  if (!(overlap >= 0 && overlap < 1))
    throw new RangeError(`log-frequency plan: overlap must lie in [0, 1), got ${overlap}`);
  const minBin = options.minBin ?? probe.mainLobeHalfWidth;
  if (!(minBin >= 0.5) || !Number.isFinite(minBin))
    throw new RangeError(`log-frequency plan: minBin must be at least 0.5, got ${minBin}`);
  const jDesired = options.points ?? 200;
  if (!Number.isInteger(jDesired) || jDesired < 2 || jDesired > 100000) {
    throw new RangeError(`log-frequency plan: points must be an integer from 2 to 100000, got ${jDesired}`);
  }
  const kDesired = options.averages ?? 100;
  if (!(kDesired >= 1) || !Number.isFinite(kDesired))
    throw new RangeError(`log-frequency plan: averages must be at least 1, got ${kDesired}`);
  const rMin = fs / n; // one segment spanning the whole record
  const lowest = (minBin * fs) / n;
  const fMin = options.minFrequency ?? lowest;
  const fMax = options.maxFrequency ?? fs / 2;
  if (!(fMin >= lowest * (1 - 1e-12))) {
    throw new RangeError(
      `log-frequency plan: minFrequency ${fMin} Hz is below ${lowest} Hz, the lowest a record of ${n} samples at ${fs} Hz ` +
        `resolves ${minBin} bins clear of DC; raise minFrequency or use a longer record`,
    );
  }
  if (!(fMax > fMin && fMax <= fs / 2)) {
    throw new RangeError(
      `log-frequency plan: maxFrequency must lie in (minFrequency, fs/2] = (${fMin}, ${fs / 2}], got ${fMax}`,
    );
  }
  // Resolution at which kDesired segments with this overlap just fit: N = L·(1 + (1 − ξ)(K − 1)).
  const rAvg = rMin * (1 + (1 - overlap) * (kDesired - 1));

  const f: number[] = [];
  const seg: number[] = [];
  let freq = fMin;
  for (let j = 0; freq <= fMax * (1 + 1e-12) && j < 20 * jDesired; j++) {
    // Relative step that would reach fMax in the points still to come (recomputed each time, from memory).
    const remaining = Math.max(1, jDesired - 1 - j);
    const g = Math.exp(Math.log(Math.max(fMax / freq, 1 + 1e-12)) / remaining) - 1;
    const rLog = freq * g; // resolution the log spacing asks for
    // Where the log spacing asks for finer resolution than kDesired averages allow, take the geometric mean
    // of the two (the paper's compromise between resolution and variance).
    let r = rLog >= rAvg ? rLog : Math.sqrt(rAvg * rLog);
    r = Math.min(r, freq / minBin); // keep the point minBin bins clear of DC
    r = Math.max(r, rMin); // never longer than the record
    let len = Math.round(fs / r);
    len = Math.max(len, Math.ceil((minBin * fs) / freq - 1e-9), MIN_SEGMENT);
    len = Math.min(len, n);
    f.push(freq);
    seg.push(len);
    freq += fs / len; // the next point one resolution away, so neighbouring estimates barely overlap
  }
  return planFromPoints({ sampleRate: fs, samples: n, window: windowSpec, overlap }, f, seg);
}

/**
 * A plan from explicit (frequency, segment length) pairs, e.g. to line points up with a Welch estimate's bins.
 * Validates every point against the record.
 */
export function planFromPoints(
  base: { sampleRate: number; samples: number; window?: string; overlap?: number },
  frequencies: ArrayLike<number>,
  segments: ArrayLike<number>,
): LogFrequencyPlan {
  const fs = base.sampleRate;
  const n = base.samples;
  const windowSpec = makeWindow(base.window ?? 'hann', 64);
  const overlap = base.overlap ?? windowSpec.recommendedOverlap;
  if (!(fs > 0) || !Number.isFinite(fs))
    throw new RangeError(`log-frequency plan: sampleRate must be a positive number of Hz, got ${fs}`);
  if (!(overlap >= 0 && overlap < 1))
    throw new RangeError(`log-frequency plan: overlap must lie in [0, 1), got ${overlap}`);
  if (frequencies.length !== segments.length || frequencies.length === 0) {
    throw new RangeError(
      `log-frequency plan: need one segment length per frequency (got ${frequencies.length} and ${segments.length})`,
    );
  }
  const count = frequencies.length;
  const plan = {
    sampleRate: fs,
    samples: n,
    window: windowSpec.name,
    overlap,
    count,
    frequency: new Float64Array(count),
    segment: new Float64Array(count),
    step: new Float64Array(count),
    bin: new Float64Array(count),
    resolutionHz: new Float64Array(count),
    averages: new Float64Array(count),
  };
  for (let j = 0; j < count; j++) {
    const fj = frequencies[j];
    const len = segments[j];
    if (!Number.isInteger(len) || len < 2 || len > n) {
      throw new RangeError(
        `log-frequency plan: point ${j}: segment ${len} must be an integer from 2 to the record length ${n}`,
      );
    }
    if (!(fj >= 0 && fj <= fs / 2))
      throw new RangeError(`log-frequency plan: point ${j}: frequency ${fj} Hz must lie in [0, fs/2]`);
    const step = Math.max(1, len - Math.floor(overlap * len));
    plan.frequency[j] = fj;
    plan.segment[j] = len;
    plan.step[j] = step;
    plan.bin[j] = (fj * len) / fs;
    plan.resolutionHz[j] = fs / len;
    plan.averages[j] = Math.floor((n - len) / step) + 1;
  }
  return plan;
}
