// `floorline trend`: band RMS and floor density rows from the history store.
import { defineCommand, defineFlags, type ParsedArgs } from '../../cli/args.ts';
import { UsageError } from '../../errors.ts';
import { parseBand } from '../../../protocol/bands.ts';
import { storePathFromArgs } from '../cli-flags.ts';
import { openStoreForReading } from '../open-store.ts';
import { EVERY_CHOICES, queryTrend } from '../trend-query.ts';
import { trendCsv, trendTable } from '../trend-format.ts';
import { OUTPUT_FLAGS, SPAN_FLAGS, STORE_SOURCE_FLAGS, readOutput, readSpan } from './query-flags.ts';

async function runTrend(args: ParsedArgs<typeof TREND_FLAGS>): Promise<number> {
  const f = args.flags;
  const output = readOutput(f, 'trend');
  const span = readSpan(f, 'trend');
  let band;
  if (f.band !== undefined) {
    try {
      band = parseBand(f.band);
    } catch (err) {
      throw new UsageError(`floorline trend: ${(err as Error).message}.`);
    }
  }
  const db = openStoreForReading(storePathFromArgs(f));
  try {
    const result = queryTrend(db, { channel: f.channel, band, ...span, every: f.every });
    if (output === 'json') process.stdout.write(JSON.stringify(result) + '\n');
    else if (output === 'csv') {
      try {
        process.stdout.write(trendCsv(result));
      } catch (err) {
        throw new UsageError(`floorline trend: ${(err as Error).message}.`);
      }
    } else process.stdout.write(trendTable(result));
  } finally {
    db.close();
  }
  return 0;
}

const TREND_FLAGS = defineFlags([
  { name: 'channel', kind: 'string', value: 'NAME', help: 'only this channel' },
  {
    name: 'band',
    kind: 'string',
    value: 'LO:HI',
    help: 'only this band (Hz, as stored; see the list in the error when it does not match)',
  },
  ...SPAN_FLAGS,
  {
    name: 'every',
    kind: 'string',
    value: 'RES',
    choices: EVERY_CHOICES,
    default: '1m',
    help: 'resolution: 1s, 1m or 1h',
  },
  ...OUTPUT_FLAGS,
  ...STORE_SOURCE_FLAGS,
]);

export const trendCommand = defineCommand({
  name: 'trend',
  summary: 'band RMS (min/mean/max) and floor density over time, from the history store',
  details: [
    "A row's power is the mean of the band powers of the Welch segments that end inside its interval; mean is its",
    'square root (RMS), min and max the smallest and largest segment band RMS. A gap row starts each break.',
    'Example: floorline trend --channel bridge --band 100:1000 --from 2026-12-02T08:00:00Z --every 1m --csv',
  ].join('\n'),
  positionals: [],
  flags: TREND_FLAGS,
  run: runTrend,
});
