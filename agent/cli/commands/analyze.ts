// `floorline analyze FILE`: offline report of a whole recording (docs/ARCHITECTURE.md "analyze --json").
import type { CommandSpec, ParsedArgs } from '../args.ts';
import { UsageError } from '../usage-error.ts';
import { createProgress } from '../progress.ts';
import type { DetrendMode } from '../../core/settings.ts';
import { analyzeFile, reportToJson, validateSettings, type AnalyzeOptions } from '../../analysis/report.ts';
import { parseBand } from '../../analysis/bands.ts';
import { formatCsv } from '../../analysis/csv.ts';
import { formatTextSummary } from '../../analysis/text-summary.ts';
import { runLogFrequencyAnalysis } from '../../analysis/log-frequency-command.ts';

function optionsFrom(args: ParsedArgs): AnalyzeOptions {
  const f = args.flags;
  const segment = f.segment as number | undefined;
  if (segment !== undefined && (segment & (segment - 1)) !== 0) {
    throw new UsageError(`floorline analyze: --segment ${segment} is not a power of two; give e.g. --segment ${2 ** Math.round(Math.log2(segment))}.`);
  }
  if (f.scale !== undefined && !((f.scale as number) > 0)) {
    throw new UsageError(`floorline analyze: --scale ${f.scale} must be a positive number of volts per full scale; e.g. --scale 2.5 for a ±2.5 V ADC.`);
  }
  if (f.json && f.csv) throw new UsageError('floorline analyze: --json and --csv exclude each other; pick one (or neither for the text summary).');
  const options: AnalyzeOptions = {
    segment,
    window: f.window as string,
    overlap: f.overlap as number,
    detrend: f.detrend as DetrendMode,
    bands: [],
    scale: f.scale as number | undefined,
  };
  try {
    options.window = validateSettings(options);
    // Syntax and order here; the Nyquist limit is checked once the file's rate is known.
    options.bands = (f.band as string[]).map((b) => parseBand(b, Infinity));
  } catch (err) {
    throw new UsageError(`floorline analyze: ${(err as Error).message}.`);
  }
  return options;
}

export const analyzeCommand: CommandSpec = {
  name: 'analyze',
  summary: 'offline report of a whole WAV recording: PSD/ASD per channel, total and band RMS',
  details: [
    'Output: a text summary by default, --json (one object, keys as documented) or --csv (frequency, psd and asd per channel).',
    'Integer PCM reads as a fraction of full scale (unit FS) unless --scale gives volts per full scale.',
    'Total RMS sums every bin except DC; band RMS sums the bins whose centre f satisfies LO ≤ f ≤ HI.',
    'Example: floorline analyze rig.wav --band 20:2000 --band 2000:10000 --json',
  ].join('\n'),
  positionals: [{ name: 'FILE', help: 'WAV recording (RIFF/RF64; PCM 16/24/32-bit or float 32/64-bit)', required: true }],
  flags: [
    { name: 'segment', kind: 'number', value: 'N', integer: true, min: 64, max: 1 << 20, help: 'Welch segment length, a power of two (default 4096, or the largest giving ≥ 8 averages)' },
    { name: 'window', kind: 'string', value: 'NAME', default: 'hann', help: 'window: rect, hann, hamming, blackman-harris, nuttall, hft95, hft90d, hft116d, kaiser:ALPHA' },
    { name: 'overlap', kind: 'number', value: 'F', min: 0, max: 0.95, default: 0.5, help: 'segment overlap fraction' },
    { name: 'detrend', kind: 'string', value: 'MODE', choices: ['none', 'mean', 'linear'], default: 'mean', help: 'remove per segment before windowing' },
    { name: 'band', kind: 'list', value: 'LO:HI', help: 'band in Hz for a band RMS' },
    { name: 'scale', kind: 'number', value: 'V', help: 'volts per full scale for integer PCM or unscaled float files' },
    { name: 'json', kind: 'boolean', help: 'print the report as JSON' },
    { name: 'csv', kind: 'boolean', help: 'print the spectra as CSV' },
    { name: 'log-frequency', kind: 'boolean', help: 'log-spaced density (per-frequency segments), 1/f corner fit and 0.1–10 Hz peak-to-peak instead of the Welch report' },
  ],
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
    const { report, info } = result;
    for (const w of info.warnings) process.stderr.write(`floorline analyze: warning: ${w}\n`);
    if (args.flags.json) process.stdout.write(reportToJson(report) + '\n');
    else if (args.flags.csv) process.stdout.write(formatCsv(report));
    else process.stdout.write(formatTextSummary(report));
    return 0;
  },
};
