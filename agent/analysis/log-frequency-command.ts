// The `--log-frequency` branch of `floorline analyze`: checks the flags that do not apply, runs the
// log-frequency report and prints it as JSON, CSV or text. Kept apart so analyze.ts only dispatches.
import type { AnalyzeArgs } from '../cli/commands/analyze.ts';
import { InputError, UsageError } from '../errors.ts';
import type { AnalyzeOptions } from './report.ts';
import {
  analyzeLogFrequency,
  logFrequencyToCsv,
  logFrequencyToJson,
  logFrequencyToText,
} from './log-frequency-report.ts';

export async function runLogFrequencyAnalysis(args: AnalyzeArgs, options: AnalyzeOptions): Promise<number> {
  if (options.segment !== undefined) {
    throw new UsageError(
      'floorline analyze: --segment does not apply with --log-frequency (each frequency gets its own segment length); drop one of them.',
    );
  }
  if (options.bands.length > 0) {
    throw new UsageError(
      'floorline analyze: --band does not apply with --log-frequency; run analyze without --log-frequency for band RMS.',
    );
  }
  const f = args.flags;
  const notHere: string[] = (
    ['from', 'to', 'exclude-clipped', 'lines', 'cumulative', 'mask', 'input-referred', 'source-ohms', 'unit'] as const
  ).filter((k) => f[k] !== undefined && f[k] !== false);
  if (f.coherence.length) notHere.push('coherence');
  if (f.average === 'median') notHere.push('average');
  if (notHere.length > 0) {
    throw new UsageError(
      `floorline analyze: --${notHere.join(', --')} do(es) not apply with --log-frequency yet; run analyze without --log-frequency for them.`,
    );
  }
  const file = args.positionals[0];
  let result;
  try {
    result = await analyzeLogFrequency(file, {
      window: options.window,
      overlap: options.overlap,
      detrend: options.detrend,
      scale: options.scale,
    });
  } catch (err) {
    // The planner's RangeError names the limit (e.g. a record too short for the window): bad input, exit 2.
    if (err instanceof RangeError) throw new InputError(`floorline analyze --log-frequency: ${file}: ${err.message}.`);
    throw err;
  }
  const { report, info } = result;
  for (const w of info.warnings) process.stderr.write(`floorline analyze: warning: ${w}\n`);
  if (args.flags.json) process.stdout.write(logFrequencyToJson(report) + '\n');
  else if (args.flags.csv) process.stdout.write(logFrequencyToCsv(report));
  else process.stdout.write(logFrequencyToText(report));
  return 0;
}
