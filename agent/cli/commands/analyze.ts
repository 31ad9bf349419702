// `floorline analyze FILE`: offline report of a whole recording (docs/ARCHITECTURE.md "analyze --json").
import { UNIT_FLAG } from './unit-flag.ts';
import { threadsFlag } from './threads-flag.ts';
import { resolveThreads } from '../../workers/threads.ts';
import { defineCommand, defineFlags, type ParsedArgs } from '../args.ts';
import { UsageError } from '../../errors.ts';
import { createProgress } from '../progress.ts';
import {
  analyzeFile,
  reportToJson,
  validateSettings,
  type AnalyzeOptions,
  type ClipSummary,
} from '../../analysis/report.ts';
import { parseBand } from '../../../protocol/bands.ts';
import { csvChunks } from '../../analysis/csv.ts';
import { formatTextSummary } from '../../analysis/text-summary.ts';
import { runLogFrequencyAnalysis } from '../../analysis/log-frequency-command.ts';
import { writeOutput } from '../stdout.ts';

/** Exit status when a limit mask fails (scripts and CI tell it from a usage error, 2). */
export const MASK_FAIL_EXIT = 3;

/** One warning per channel with clipped or missing samples in the span, naming how many, where, and the flags. */
export function clipWarnings(clips: readonly ClipSummary[], sampleRate: number, excluded: boolean): string[] {
  const out: string[] = [];
  for (const c of clips) {
    if (c.count === 0 && c.missing === 0) continue;
    const where =
      c.count > 0
        ? ` at t = ${(c.first / sampleRate).toFixed(3)}–${(c.last / sampleRate).toFixed(3)} s (samples ${c.first}–${c.last})`
        : '';
    const what = [
      c.count > 0 ? `${c.count} clipped sample(s)${where}` : '',
      c.missing > 0 ? `${c.missing} missing (non-finite) sample(s)` : '',
    ]
      .filter(Boolean)
      .join(' and ');
    out.push(
      excluded
        ? `${c.channel}: ${what}; the segments that touch them were left out (--exclude-clipped).`
        : `${c.channel}: ${what} in the span, and the averages include them; give --exclude-clipped to leave out the segments that touch them, or --from/--to for a span without them.`,
    );
  }
  return out;
}

export type AnalyzeArgs = ParsedArgs<typeof ANALYZE_FLAGS>;

function optionsFrom(args: AnalyzeArgs): AnalyzeOptions {
  const f = args.flags;
  const segment = f.segment;
  if (segment !== undefined && (segment & (segment - 1)) !== 0) {
    throw new UsageError(
      `floorline analyze: --segment ${segment} is not a power of two; give e.g. --segment ${2 ** Math.round(Math.log2(segment))}.`,
    );
  }
  if (f.scale !== undefined && !(f.scale > 0)) {
    throw new UsageError(
      `floorline analyze: --scale ${f.scale} must be a positive number of volts per full scale; e.g. --scale 2.5 for a ±2.5 V ADC.`,
    );
  }
  if (f.json && f.csv)
    throw new UsageError(
      'floorline analyze: --json and --csv exclude each other; pick one (or neither for the text summary).',
    );
  const options: AnalyzeOptions = {
    segment,
    window: f.window,
    overlap: f.overlap,
    detrend: f.detrend,
    bands: [],
    scale: f.scale,
    from: f.from,
    to: f.to,
    average: f.average,
    excludeClipped: f['exclude-clipped'],
    lines: f.lines,
    cumulative: f.cumulative,
    mask: f.mask,
    coherence: f.coherence,
    unit: f.unit,
    inputReferred: f['input-referred'],
    threads: resolveThreads(f.threads),
  };
  if (f['source-ohms'] !== undefined) {
    options.source = { ohms: f['source-ohms'], kelvin: f['source-kelvin'] };
  } else if (f['source-kelvin'] !== 290) {
    throw new UsageError(
      'floorline analyze: --source-kelvin needs --source-ohms (the source resistance for the noise figure); add e.g. --source-ohms 350.',
    );
  }
  if (options.unit !== undefined && !/^[A-Za-zµΩ°%]{1,12}$/.test(options.unit)) {
    throw new UsageError(
      `floorline analyze: --unit '${options.unit}' is not a unit symbol; write e.g. --unit V or --unit Pa.`,
    );
  }
  try {
    options.window = validateSettings(options);
    // Syntax and order here; the Nyquist limit is checked once the file's rate is known.
    options.bands = f.band.map((b) => parseBand(b, Infinity));
  } catch (err) {
    throw new UsageError(`floorline analyze: ${(err as Error).message}.`);
  }
  return options;
}

const ANALYZE_FLAGS = defineFlags([
  threadsFlag,
  {
    name: 'segment',
    kind: 'number',
    value: 'N',
    integer: true,
    min: 64,
    max: 1 << 20,
    help: 'Welch segment length, a power of two (default 4096, or the largest giving ≥ 8 averages)',
  },
  {
    name: 'window',
    kind: 'string',
    value: 'NAME',
    default: 'hann',
    help: 'window: rect, hann, hamming, blackman-harris, nuttall, hft95, hft90d, hft116d, kaiser:ALPHA',
  },
  { name: 'overlap', kind: 'number', value: 'F', min: 0, max: 0.95, default: 0.5, help: 'segment overlap fraction' },
  {
    name: 'detrend',
    kind: 'string',
    value: 'MODE',
    choices: ['none', 'mean', 'linear'],
    default: 'mean',
    help: 'remove per segment before windowing',
  },
  { name: 'band', kind: 'list', value: 'LO:HI', help: 'band in Hz for a band RMS' },
  { name: 'scale', kind: 'number', value: 'V', help: 'volts per full scale for integer PCM or unscaled float files' },
  { name: 'json', kind: 'boolean', help: 'print the report as JSON' },
  { name: 'csv', kind: 'boolean', help: 'print the spectra as CSV' },
  {
    name: 'from',
    kind: 'string',
    value: 'TIME',
    help: 'start of the span: seconds of sample time, or ISO-8601 wall time when the metadata has a start',
  },
  { name: 'to', kind: 'string', value: 'TIME', help: 'end of the span (exclusive), as --from' },
  {
    name: 'average',
    kind: 'string',
    value: 'MODE',
    choices: ['mean', 'median'],
    default: 'mean',
    help: 'segment averaging; median is bias-corrected as scipy.signal.welch',
  },
  {
    name: 'exclude-clipped',
    kind: 'boolean',
    help: 'leave out segments that touch a clipped or missing sample (counted in the report)',
  },
  {
    name: 'lines',
    kind: 'boolean',
    help: 'list lines above the local floor (the live spur/mains finder), mains harmonics classified',
  },
  { name: 'cumulative', kind: 'boolean', help: 'cumulative RMS against frequency, from the first non-DC bin up' },
  {
    name: 'mask',
    kind: 'string',
    value: 'FILE',
    help: 'ASD limit mask (CSV frequency,limit[,unit]); pass/fail per band, exit 3 on fail',
  },
  {
    name: 'coherence',
    kind: 'list',
    value: 'A:B',
    help: 'magnitude-squared coherence and CSD of two channels (names or 0-based indices)',
  },
  UNIT_FLAG,
  {
    name: 'input-referred',
    kind: 'boolean',
    help: "divide by each channel's gain from the recording's metadata (densities at the amplifier input)",
  },
  {
    name: 'source-ohms',
    kind: 'number',
    value: 'R',
    min: 1e-6,
    help: 'source resistance for noise figure and noise temperature per band and per bin',
  },
  {
    name: 'source-kelvin',
    kind: 'number',
    value: 'K',
    min: 0.001,
    default: 290,
    help: 'source temperature for the noise figure',
  },
  {
    name: 'log-frequency',
    kind: 'boolean',
    help: 'log-spaced density (per-frequency segments), 1/f corner fit and 0.1–10 Hz peak-to-peak instead of the Welch report',
  },
]);

export const analyzeCommand = defineCommand({
  name: 'analyze',
  summary: 'offline report of a WAV recording: PSD/ASD per channel, total and band RMS, lines, masks, coherence',
  details: [
    'Output: a text summary by default, --json (one object, keys as documented) or --csv (frequency, psd and asd per channel).',
    'Integer PCM reads as a fraction of full scale (unit FS) unless --scale gives volts per full scale.',
    'Total RMS sums every bin except DC; band RMS sums the bins whose centre f satisfies LO ≤ f ≤ HI; without --band',
    'the decade bands of the live rules are reported.',
    'Clipped samples (|x| within 0.1 % of full scale) are counted and warned about; --exclude-clipped leaves out the',
    'segments that touch one. --average median is robust to a short burst (bias-corrected as scipy.signal.welch).',
    'A limit mask is CSV with a header frequency,limit[,unit] (log-log interpolation); a failing mask exits 3.',
    'Example: floorline analyze rig.wav --from 0 --to 50 --exclude-clipped --lines --mask spec.csv',
  ].join('\n'),
  positionals: [
    { name: 'FILE', help: 'WAV recording (RIFF/RF64; PCM 16/24/32-bit or float 32/64-bit)', required: true },
  ],
  flags: ANALYZE_FLAGS,
  async run(args) {
    const options = optionsFrom(args);
    if (args.flags['log-frequency']) return runLogFrequencyAnalysis(args, options);
    const progress = createProgress('analyze');
    options.onProgress = (done, total) => progress.update(done, total);
    const file = args.positionals[0];
    let result;
    try {
      result = await analyzeFile(file, options);
    } finally {
      progress.finish();
    }
    const { report, info, clips, maskFailed, maskLimits } = result;
    const warnings = clipWarnings(clips, report.sampleRate, options.excludeClipped === true);
    // The text report carries the clip warnings itself; JSON and CSV readers get them on stderr.
    const toStderr = args.flags.json || args.flags.csv ? [...info.warnings, ...warnings] : info.warnings;
    for (const w of toStderr) process.stderr.write(`floorline analyze: warning: ${w}\n`);
    if (result.excludedFrames > 0) {
      process.stderr.write(
        `floorline analyze: warning: ${result.excludedFrames} frames hold NaN, ±Inf or values beyond float32; they are excluded like a gap\n`,
      );
    }
    if (args.flags.json) await writeOutput([reportToJson(report) + '\n']);
    else if (args.flags.csv) await writeOutput(csvChunks(report, maskLimits));
    else await writeOutput([formatTextSummary(report, warnings)]);
    return maskFailed ? MASK_FAIL_EXIT : 0;
  },
});
