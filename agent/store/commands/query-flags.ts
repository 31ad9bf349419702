// Flags shared by the store's query commands: which store, which span, which output.
import type { FlagSpec, ParsedArgs } from '../../cli/args.ts';
import { UsageError } from '../../errors.ts';
import { DEFAULT_DATA_FOLDER } from '../../config/data-folder.ts';
import { parseTimeBound, type TimeBound } from '../time-bound.ts';

export const STORE_SOURCE_FLAGS: FlagSpec[] = [
  { name: 'store', kind: 'string', value: 'FILE', help: 'history store file to read' },
  {
    name: 'data',
    kind: 'string',
    value: 'DIR',
    default: DEFAULT_DATA_FOLDER,
    help: 'data folder whose floorline.sqlite to read (when --store is not given)',
  },
];

export const SPAN_FLAGS: FlagSpec[] = [
  { name: 'from', kind: 'string', value: 'TIME', help: 'start: ISO-8601 wall time or t=SECONDS of sample time' },
  { name: 'to', kind: 'string', value: 'TIME', help: 'end (exclusive): ISO-8601 wall time or t=SECONDS' },
];

export const OUTPUT_FLAGS: FlagSpec[] = [
  { name: 'json', kind: 'boolean', help: 'print JSON' },
  { name: 'csv', kind: 'boolean', help: 'print CSV (units in the column names)' },
];

export function readSpan(args: ParsedArgs, command: string): { from?: TimeBound; to?: TimeBound } {
  const parse = (name: 'from' | 'to'): TimeBound | undefined => {
    const v = args.flags[name] as string | undefined;
    if (v === undefined) return undefined;
    try {
      return parseTimeBound(v);
    } catch (err) {
      throw new UsageError(`floorline ${command}: --${name}: ${(err as Error).message}.`);
    }
  };
  return { from: parse('from'), to: parse('to') };
}

export function readOutput(args: ParsedArgs, command: string): 'json' | 'csv' | 'text' {
  if (args.flags.json && args.flags.csv) throw new UsageError(`floorline ${command}: give --json or --csv, not both.`);
  return args.flags.json ? 'json' : args.flags.csv ? 'csv' : 'text';
}
