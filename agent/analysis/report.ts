// The offline report of a recording (or a span of it): one Welch estimate per channel (mean, or median
// bias-corrected as scipy.signal.welch(average='median')), total and band RMS, and on request the line list,
// cumulative RMS, a limit-mask verdict, noise figure and cross-channel coherence. Clipped samples are counted;
// segments that touch one can be left out. Shared by `floorline analyze` (printed as JSON, CSV or text).
import type { DetrendMode } from '../../protocol/settings.ts';
import { bandBins, bandRmsInBins } from '../../dsp/bands.ts';
import { CrossSpectrum } from '../../dsp/cross-spectrum.ts';
import { cumulativeRms } from '../../dsp/measure/cumulative-rms.ts';
import { judgeMask, maskOnBins, type MaskVerdict } from '../../dsp/measure/limit-mask.ts';
import { makeEstimator, type ChannelEstimatorPlan } from '../workers/channel-spectra.ts';
import { chooseChannelSpectra } from '../workers/choose-channel-spectra.ts';
import { parseWindowName, windowMainLobeHalfWidth } from '../../dsp/windows.ts';
import { defaultBands } from '../rules/default-bands.ts';
import { WavReader, type WavInfo } from '../wav/reader.ts';
import { channelFullScale, channelLsb, ClipScan } from './clip-scan.ts';
import { AnalysisInputError } from './input-error.ts';
import { applyUnitOverride } from '../wav/unit-override.ts';
import { findLines, makeLineSearch, type ReportLine } from './lines.ts';
import { readMaskFile } from './mask-file.ts';
import { budgetReport, type BudgetReport } from './budget-report.ts';
import { bandNoiseFigures, type NoiseFigureReport, type SourceSpec } from './noise-figure-report.ts';
import { defaultSegment, segmentCount } from './segment-choice.ts';
import { frameSpan } from './span.ts';
import { resolveChannelPairs } from './channel-pairs.ts';
import { CLIP_FRACTION, FLOAT32_MAX } from '../pipeline/conditioner.ts';
import type { Band } from '../../protocol/bands.ts';

export { AnalysisInputError } from './input-error.ts';

export type AverageMode = 'mean' | 'median';

export interface AnalyzeOptions {
  /** Segment length; default from defaultSegment(). */
  segment?: number;
  window: string;
  overlap: number;
  detrend: DetrendMode;
  /** Bands for band RMS; empty = the live rules' default decade bands. */
  bands: Band[];
  /** Volts per full scale for "FS" files. */
  scale?: number;
  /** Span: seconds of sample time or ISO wall time (see span.ts). */
  from?: string;
  to?: string;
  average?: AverageMode;
  excludeClipped?: boolean;
  /** Threads for the per-channel estimates (default 1: all on the calling thread); results are identical. */
  threads?: number;
  lines?: boolean;
  cumulative?: boolean;
  /** Limit-mask CSV path. */
  mask?: string;
  /** Channel pairs "A:B" (names or 0-based indices). */
  coherence?: string[];
  /** Unit of channels that read as "FS" (a float file from elsewhere already in this unit). */
  unit?: string;
  /** Divide by each channel's gain from the recording's metadata: densities at the amplifier input. */
  inputReferred?: boolean;
  /** Source resistance (and temperature) for noise figure and noise temperature. */
  source?: SourceSpec;
  /** Called after each block with frames read so far and the total. */
  onProgress?: (done: number, total: number) => void;
}

export interface ReportSettings {
  segment: number;
  window: string;
  overlap: number;
  detrend: DetrendMode;
  averages: number;
  nenbw: number;
  enbwHz: number;
  binHz: number;
  average: AverageMode;
  /** Segments left out because they touch a clipped or missing sample (0 without --exclude-clipped). */
  excludedSegments: number;
  /** Overlap-corrected number of independent averages behind each bin (Welch 1967; median: see report.ts). */
  equivalentAverages: number;
  /** The analysed span in sample time: first sample, one past the last, and t of both. */
  span: { firstSample: number; endSample: number; from: number; to: number };
}

export interface ChannelReport {
  name: string;
  unit: string;
  /** "input" when divided by the front-end gain, else "adc" (as recorded). */
  referredTo: 'input' | 'adc';
  gain?: number;
  frequency: Float64Array;
  psd: Float64Array;
  asd: Float64Array;
  /** Total RMS from the PSD over every bin except DC (bins 1 … N/2). */
  rms: number;
  bands: { low: number; high: number; rms: number }[];
  clippedSamples: number;
  /** Non-finite samples (a gap written as NaN). */
  missingSamples: number;
  /** Full-scale peak at the ADC in the channel unit, when known (for dBFS/√Hz). */
  fullScale?: number;
  /** One converter step (LSB) at the ADC in the channel unit, when known (for LSB/√Hz). */
  lsb?: number;
  lines?: ReportLine[];
  cumulativeRms?: Float64Array;
  mask?: MaskVerdict & { bands: ({ low: number; high: number } & MaskVerdict)[] };
  noiseFigure?: NoiseFigureReport;
  /** The recording metadata's noise budget against the measured density near 1 kHz. */
  budget?: BudgetReport;
}

export interface CoherenceReport {
  a: string;
  b: string;
  frequency: Float64Array;
  coherence: Float64Array;
  csdRe: Float64Array;
  csdIm: Float64Array;
}

/** The key order of this object is the order of docs/ARCHITECTURE.md "analyze --json". */
export interface AnalysisReport {
  file: string;
  sampleRate: number;
  samples: number;
  settings: ReportSettings;
  channels: ChannelReport[];
  coherence?: CoherenceReport[];
}

/** Where clipped samples lie, per channel, for the warning and the text report. */
export interface ClipSummary {
  channel: string;
  count: number;
  missing: number;
  first: number;
  last: number;
}

/**
 * Relative efficiency of the bias-corrected median of χ²₂ periodogram bins against their mean: the sample median's
 * variance 1/(4n·f(m)²) for exponential variates (m = μ ln 2, f(m) = 1/(2μ)) divided by (ln 2)² gives
 * μ²/(n (ln 2)²), so a median behaves as (ln 2)² ≈ 0.48 as many averages (asymptotic, from memory).
 */
export const MEDIAN_EFFICIENCY = Math.LN2 * Math.LN2;

/** Median rows are held in memory; beyond this many bytes per channel the span is refused. */
export const MEDIAN_MAX_BYTES = 256 << 20;

/** Throws RangeError for settings that no file could satisfy (the CLI turns it into a usage error). */
export function validateSettings(options: AnalyzeOptions): string {
  if (!(options.overlap >= 0 && options.overlap < 1))
    throw new RangeError(`--overlap ${options.overlap}: give a fraction in [0, 1), e.g. 0.5`);
  return parseWindowName(options.window);
}

function applyUnit(info: WavInfo, unit: string | undefined, path: string): void {
  const problem = applyUnitOverride(info.channels, unit, path);
  if (problem) throw new AnalysisInputError(problem);
}

/** How a channel is referred: `divide` is the gain to divide by (none when the samples stay as they are). */
interface Referral {
  referredTo: 'input' | 'adc';
  gain?: number;
  divide?: number;
}

/**
 * Per channel: samples a rig config already divided by the gain (metadata `calibration.inputReferred`) read at the
 * input as they are; with --input-referred the others are divided by the metadata gain (or the calibration's).
 */
function channelReferrals(info: WavInfo, path: string, inputReferred: boolean): Referral[] {
  return info.channels.map((ch, c) => {
    const m = info.metadata?.channels[c];
    const g = m?.gain ?? m?.calibration?.gain;
    if (m?.calibration?.inputReferred) return { referredTo: 'input', ...(g !== undefined ? { gain: g } : {}) };
    if (!inputReferred) return { referredTo: 'adc' };
    if (g === undefined || !(g > 0)) {
      throw new AnalysisInputError(
        `--input-referred: channel ${ch.name} of ${path} has no positive "gain" in its metadata; add "gain" (V/V ahead of the ADC) to channels[${c}] of ${path}.json, or drop --input-referred.`,
      );
    }
    return { referredTo: 'input', gain: g, divide: g };
  });
}

export async function analyzeFile(
  path: string,
  options: AnalyzeOptions,
): Promise<{
  report: AnalysisReport;
  info: WavInfo;
  clips: ClipSummary[];
  maskFailed: boolean;
  maskLimits?: Float64Array;
  excludedFrames: number;
}> {
  const window = validateSettings(options);
  const reader = await WavReader.open(path, { scale: options.scale });
  let closeSpectra: (() => Promise<void>) | undefined;
  try {
    const { info } = reader;
    applyUnit(info, options.unit, path);
    const nyquist = info.sampleRate / 2;
    for (const b of options.bands) {
      if (b.high > nyquist) {
        throw new AnalysisInputError(
          `--band ${b.low}:${b.high}: HI is above the Nyquist frequency ${nyquist} Hz of ${path}; give HI ≤ ${nyquist}.`,
        );
      }
    }
    const mask = options.mask !== undefined ? readMaskFile(options.mask, nyquist) : undefined;
    const pairs = resolveChannelPairs(
      options.coherence ?? [],
      info.channels.map((c) => c.name),
    );
    const referrals = channelReferrals(info, path, options.inputReferred === true);
    const span = frameSpan(info, options.from, options.to);
    const spanFrames = span.end - span.start;
    const segment = options.segment ?? defaultSegment(spanFrames, options.overlap);
    if (segment === undefined || spanFrames < segment) {
      const need = segment ?? 64;
      const whole = options.from === undefined && options.to === undefined;
      const what = whole ? 'recording' : 'span';
      throw new AnalysisInputError(
        `${path}${whole ? '' : ': the span'} has ${spanFrames} frames, shorter than one segment of ${need}; ` +
          (need > 64
            ? `give a smaller --segment (a power of two ≥ 64) or a longer ${what}.`
            : `analyze a ${what} of at least 64 samples.`),
      );
    }
    const average = options.average ?? 'mean';
    const planned = segmentCount(spanFrames, segment, options.overlap);
    if (average === 'median' && planned * (segment / 2 + 1) * 8 > MEDIAN_MAX_BYTES) {
      throw new AnalysisInputError(
        `--average median: ${planned} segments of ${segment} would hold ${Math.round((planned * (segment / 2 + 1) * 8) / 2 ** 20)} MiB per channel; ` +
          `give a shorter span (--from/--to) or a larger --segment.`,
      );
    }
    const firstSample = info.firstSample + span.start;
    const fullScales = info.channels.map((ch) => channelFullScale(ch, info));
    const scan = new ClipScan(fullScales);
    // The non-finite policy of the live pipeline: a segment touching NaN, ±Inf or a value beyond float32 is left
    // out always, not only under --exclude-clipped (a scan whose "full scale" is the float32 limit finds them).
    // A segment filter keeps the work on this thread, so with --threads the filter is added only when a fault
    // turns up (the file is then read again, on one thread).
    const faults = new ClipScan(info.channels.map(() => FLOAT32_MAX / (1 - CLIP_FRACTION)));
    const threads = options.threads ?? 1;
    const filterFaults = threads <= 1;
    const acceptFor = (): ((a: number, b: number) => boolean) => {
      const finite = faults.makeAccept();
      if (!options.excludeClipped) return finite;
      const clean = scan.makeAccept();
      return (a, b) => finite(a, b) && clean(a, b);
    };
    const plan: ChannelEstimatorPlan = {
      sampleRate: info.sampleRate,
      segment,
      window,
      overlap: options.overlap,
      detrend: options.detrend,
      firstSample,
      medianOf: average === 'median' ? planned : undefined,
    };
    const spectra = chooseChannelSpectra(
      plan,
      info.channels.length,
      threads,
      filterFaults ? acceptFor : options.excludeClipped ? () => scan.makeAccept() : undefined,
    );
    if (spectra.close) closeSpectra = () => spectra.close!();
    const crosses = pairs.map(
      () =>
        new CrossSpectrum({
          sampleRate: info.sampleRate,
          segment,
          window,
          overlap: options.overlap,
          detrend: options.detrend,
          firstSample,
          accept: acceptFor(),
        }),
    );
    reader.seek(span.start);
    let done = 0;
    for (let block = await reader.read(); block && done < spanFrames; block = await reader.read()) {
      const frames = Math.min(block.frames, spanFrames - done);
      scan.scan(block.data, frames, firstSample + done);
      faults.scan(block.data, frames, firstSample + done);
      await spectra.push(block.data, frames);
      for (let p = 0; p < pairs.length; p++) crosses[p].push(block.data[pairs[p].a], block.data[pairs[p].b], 0, frames);
      done += frames;
      options.onProgress?.(done, spanFrames);
    }
    closeSpectra = undefined;
    const results = await spectra.finish();
    if (!filterFaults && faults.total > 0) {
      return analyzeFile(path, { ...options, threads: 1 }); // this reader is closed by the finally below
    }
    // Window, bins and frequencies of the estimates (never fed).
    const first = makeEstimator(plan);
    if (results[0].segmentsUsed === 0 && !options.excludeClipped && faults.total > 0) {
      throw new AnalysisInputError(
        `${path}: no whole segment of ${segment} finite samples (${faults.total} samples are NaN, ±Inf or beyond float32 and are excluded); ` +
          `give a smaller --segment or a span of finite samples (--from/--to).`,
      );
    }
    if (results[0].segmentsUsed === 0) {
      throw new AnalysisInputError(
        `${path}: every one of the ${results[0].segmentsExcluded} segments touches a clipped or missing sample; choose a span without them (--from/--to) or drop --exclude-clipped.`,
      );
    }
    const keq = results[0].equivalentAverages * (average === 'median' ? MEDIAN_EFFICIENCY : 1);
    const settings: ReportSettings = {
      segment,
      window: first.window.name,
      overlap: options.overlap,
      detrend: options.detrend,
      averages: results[0].segmentsUsed,
      nenbw: first.window.nenbw,
      enbwHz: first.window.enbwHz(info.sampleRate),
      binHz: first.binHz,
      average,
      excludedSegments: results[0].segmentsExcluded,
      equivalentAverages: keq,
      span: {
        firstSample,
        endSample: firstSample + done,
        from: firstSample / info.sampleRate,
        to: (firstSample + done) / info.sampleRate,
      },
    };
    const halfWidth = windowMainLobeHalfWidth(window);
    const bands = options.bands.length > 0 ? options.bands : defaultBands(info.sampleRate, segment, halfWidth);
    const ranges = bands.map((b) => bandBins(first.bins, first.binHz, b.low, b.high));
    const lineSearch = options.lines ? makeLineSearch(first.frequencies, first.binHz, halfWidth) : undefined;
    const limits = mask ? maskOnBins(mask, first.frequencies) : undefined;
    let maskFailed = false;
    const channels: ChannelReport[] = info.channels.map((ch, c) => {
      const psd = results[c].psd;
      const { referredTo, gain, divide } = referrals[c];
      if (divide !== undefined) for (let k = 0; k < psd.length; k++) psd[k] /= divide * divide;
      const asd = new Float64Array(psd.length);
      for (let k = 0; k < psd.length; k++) asd[k] = Math.sqrt(psd[k]);
      const clip = scan.channels[c];
      const out: ChannelReport = {
        name: ch.name,
        unit: ch.unit,
        referredTo,
        ...(gain !== undefined ? { gain } : {}),
        frequency: first.frequencies,
        psd,
        asd,
        rms: bandRmsInBins(psd, first.binHz, 1, psd.length - 1),
        bands: bands.map((b, i) => ({
          low: b.low,
          high: b.high,
          rms: bandRmsInBins(psd, first.binHz, ranges[i].first, ranges[i].last),
        })),
        clippedSamples: clip.count,
        missingSamples: clip.missing,
        ...(Number.isFinite(fullScales[c]) ? { fullScale: fullScales[c] } : {}),
        ...(channelLsb(ch, info) !== undefined ? { lsb: channelLsb(ch, info) } : {}),
      };
      const meta = info.metadata?.channels[c];
      const budget = meta ? budgetReport(meta, psd, first.binHz, info.sampleRate, out.lsb, out.referredTo) : undefined;
      if (budget) out.budget = budget;
      if (lineSearch) out.lines = findLines(lineSearch, psd, keq);
      if (options.cumulative) out.cumulativeRms = cumulativeRms(psd, first.binHz);
      if (mask && limits) {
        if (mask.unit !== undefined && mask.unit !== ch.unit) {
          throw new AnalysisInputError(
            `--mask ${mask.path}: its limits are in ${mask.unit}/√Hz but channel ${ch.name} is in ${ch.unit}/√Hz; give a mask in ${ch.unit}/√Hz.`,
          );
        }
        const whole = judgeMask(asd, limits, first.frequencies, 1, psd.length - 1);
        if (!whole.pass) maskFailed = true;
        const perBand = bands.map((b, i) => ({
          low: b.low,
          high: b.high,
          ...judgeMask(asd, limits, first.frequencies, Math.max(1, ranges[i].first), ranges[i].last),
        }));
        out.mask = { ...whole, bands: perBand };
      }
      if (options.source && ch.unit !== 'V') {
        throw new AnalysisInputError(
          `--source-ohms: channel ${ch.name} is in ${ch.unit}, but a noise figure compares volts with Johnson noise; give --scale or --unit V for a volts recording.`,
        );
      }
      if (options.source) out.noiseFigure = bandNoiseFigures(psd, first.binHz, bands, ranges, options.source);
      return out;
    });
    const report: AnalysisReport = { file: path, sampleRate: info.sampleRate, samples: done, settings, channels };
    if (pairs.length > 0) {
      report.coherence = pairs.map((p, i) => {
        const r = crosses[i].result();
        const g = (referrals[p.a].divide ?? 1) * (referrals[p.b].divide ?? 1);
        for (let k = 0; k < r.csdRe.length; k++) {
          r.csdRe[k] /= g;
          r.csdIm[k] /= g;
        }
        return {
          a: info.channels[p.a].name,
          b: info.channels[p.b].name,
          frequency: first.frequencies,
          coherence: r.coherence,
          csdRe: r.csdRe,
          csdIm: r.csdIm,
        };
      });
    }
    const clips = info.channels.map((ch, c) => ({
      channel: ch.name,
      count: scan.channels[c].count,
      missing: scan.channels[c].missing,
      first: scan.channels[c].first,
      last: scan.channels[c].last,
    }));
    return { report, info, clips, maskFailed, maskLimits: limits, excludedFrames: faults.total };
  } finally {
    await closeSpectra?.();
    await reader.close();
  }
}

/** The report as JSON (typed arrays as plain number arrays, keys in contract order; NaN as null). */
export function reportToJson(report: AnalysisReport): string {
  return JSON.stringify(report, (_key, value) => (value instanceof Float64Array ? Array.from(value) : value));
}
