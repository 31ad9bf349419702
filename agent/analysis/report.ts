// The offline report of a whole recording: one Welch mean over every whole segment, per channel, with total and
// band RMS. Shared by `floorline analyze` (printed as JSON, CSV or text) and, later, `floorline baseline`.
import type { DetrendMode } from '../core/settings.ts';
import { bandBins, bandRmsInBins } from '../../dsp/bands.ts';
import { WelchEstimator } from '../../dsp/welch.ts';
import { WavReader, type WavInfo } from '../wav/reader.ts';
import { parseWindowName } from '../../dsp/windows.ts';
import { defaultSegment } from './segment-choice.ts';
import type { Band } from './bands.ts';

export interface AnalyzeOptions {
  /** Segment length; default from defaultSegment(). */
  segment?: number;
  window: string;
  overlap: number;
  detrend: DetrendMode;
  bands: Band[];
  /** Volts per full scale for "FS" files. */
  scale?: number;
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
}

export interface ChannelReport {
  name: string;
  unit: string;
  frequency: Float64Array;
  psd: Float64Array;
  asd: Float64Array;
  /** Total RMS from the PSD over every bin except DC (bins 1 … N/2). */
  rms: number;
  bands: { low: number; high: number; rms: number }[];
}

/** The key order of this object is the order of docs/ARCHITECTURE.md "analyze --json". */
export interface AnalysisReport {
  file: string;
  sampleRate: number;
  samples: number;
  settings: ReportSettings;
  channels: ChannelReport[];
}

/** A file that cannot be analysed as asked (too short, band above its Nyquist): exit 2, message names the fix. */
export class AnalysisInputError extends Error {
  override readonly name = 'AnalysisInputError';
  readonly exitCode = 2;
}

/** Throws RangeError for settings that no file could satisfy (the CLI turns it into a usage error). */
export function validateSettings(options: AnalyzeOptions): string {
  if (!(options.overlap >= 0 && options.overlap < 1)) throw new RangeError(`--overlap ${options.overlap}: give a fraction in [0, 1), e.g. 0.5`);
  return parseWindowName(options.window);
}

export async function analyzeFile(path: string, options: AnalyzeOptions): Promise<{ report: AnalysisReport; info: WavInfo }> {
  const window = validateSettings(options);
  const reader = await WavReader.open(path, { scale: options.scale });
  try {
    const { info } = reader;
    const nyquist = info.sampleRate / 2;
    for (const b of options.bands) {
      if (b.high > nyquist) {
        throw new AnalysisInputError(`--band ${b.low}:${b.high}: HI is above the Nyquist frequency ${nyquist} Hz of ${path}; give HI ≤ ${nyquist}.`);
      }
    }
    const segment = options.segment ?? defaultSegment(info.frames, options.overlap);
    if (segment === undefined || info.frames < segment) {
      const need = segment ?? 64;
      throw new AnalysisInputError(
        `${path} has ${info.frames} frames, shorter than one segment of ${need}; ` +
          (need > 64 ? `give a smaller --segment (a power of two ≥ 64) or a longer recording.` : `analyze a recording of at least 64 samples.`),
      );
    }
    const estimators = info.channels.map(
      () => new WelchEstimator({ sampleRate: info.sampleRate, segment, window, overlap: options.overlap, detrend: options.detrend, averaging: { mode: 'mean' } }),
    );
    let done = 0;
    for (let block = await reader.read(); block; block = await reader.read()) {
      for (let c = 0; c < estimators.length; c++) estimators[c].push(block.data[c], 0, block.frames);
      done += block.frames;
      options.onProgress?.(done, info.frames);
    }
    const first = estimators[0];
    const settings: ReportSettings = {
      segment,
      window: first.window.name,
      overlap: options.overlap,
      detrend: options.detrend,
      averages: first.segmentsUsed,
      nenbw: first.window.nenbw,
      enbwHz: first.window.enbwHz(info.sampleRate),
      binHz: first.binHz,
    };
    const ranges = options.bands.map((b) => bandBins(first.bins, first.binHz, b.low, b.high));
    const channels: ChannelReport[] = info.channels.map((ch, c) => {
      const psd = estimators[c].psd();
      const asd = new Float64Array(psd.length);
      for (let k = 0; k < psd.length; k++) asd[k] = Math.sqrt(psd[k]);
      return {
        name: ch.name,
        unit: ch.unit,
        frequency: first.frequencies,
        psd,
        asd,
        rms: bandRmsInBins(psd, first.binHz, 1, psd.length - 1),
        bands: options.bands.map((b, i) => ({ low: b.low, high: b.high, rms: bandRmsInBins(psd, first.binHz, ranges[i].first, ranges[i].last) })),
      };
    });
    return { report: { file: path, sampleRate: info.sampleRate, samples: done, settings, channels }, info };
  } finally {
    await reader.close();
  }
}

/** The report as docs/ARCHITECTURE.md's JSON (typed arrays as plain number arrays, keys in contract order). */
export function reportToJson(report: AnalysisReport): string {
  return JSON.stringify(report, (_key, value) => (value instanceof Float64Array ? Array.from(value) : value));
}
