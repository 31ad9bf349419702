// Flags shared by the store's query commands: which store, which span, which output.
import { defineFlags, type FlagValues } from '../../cli/args.ts';
import { UsageError } from '../../errors.ts';
import { DEFAULT_DATA_FOLDER } from '../../config/data-folder.ts';
import { parseTimeBound, type TimeBound } from '../time-bound.ts';

export const STORE_SOURCE_FLAGS = defineFlags([
  { name: 'store', kind: 'string', value: 'FILE', help: 'history store file to read' },
  {
    name: 'data',
    kind: 'string',
    value: 'DIR',
    default: DEFAULT_DATA_FOLDER,
    help: 'data folder whose floorline.sqlite to read (when --store is not given)',
  },
]);

export const SPAN_FLAGS = defineFlags([
  { name: 'from', kind: 'string', value: 'TIME', help: 'start: ISO-8601 wall time or t=SECONDS of sample time' },
  { name: 'to', kind: 'string', value: 'TIME', help: 'end (exclusive): ISO-8601 wall time or t=SECONDS' },
]);

export const OUTPUT_FLAGS = defineFlags([
  { name: 'json', kind: 'boolean', help: 'print JSON' },
  { name: 'csv', kind: 'boolean', help: 'print CSV (units in the column names)' },
]);

export function readSpan(f: FlagValues<typeof SPAN_FLAGS>, command: string): { from?: TimeBound; to?: TimeBound } {
  const parse = (name: 'from' | 'to'): TimeBound | undefined => {
    const v = f[name];
    if (v === undefined) return undefined;
    try {
      return parseTimeBound(v);
    } catch (err) {
      throw new UsageError(`floorline ${command}: --${name}: ${(err as Error).message}.`);
    }
  };
  return { from: parse('from'), to: parse('to') };
}

export function readOutput(f: FlagValues<typeof OUTPUT_FLAGS>, command: string): 'json' | 'csv' | 'text' {
  if (f.json && f.csv) throw new UsageError(`floorline ${command}: give --json or --csv, not both.`);
  return f.json ? 'json' : f.csv ? 'csv' : 'text';
}
