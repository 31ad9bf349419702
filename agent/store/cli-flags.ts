// Store flags of run, replay and demo, and where each command's store lives: a live run keeps the rig's history
// in DATA/floorline.sqlite; a replay writes to --store FILE or to a store of its own under DATA/replays/, never
// into the rig's; the demo (a replay of the bundled recording) keeps DATA/replays/demo.sqlite.
import { basename, join, resolve } from 'node:path';
import { defineFlags, type FlagValues } from '../cli/args.ts';
import { UsageError } from '../errors.ts';
import { parseRetention } from './levels.ts';
import type { Level } from './schema.ts';

export const STORE_FILE = 'floorline.sqlite';

export const HISTORY_FLAGS = defineFlags([
  {
    name: 'store',
    kind: 'string',
    value: 'FILE',
    help: 'history store (SQLite) to write; default DATA/floorline.sqlite for run, DATA/replays/… for replay',
  },
  { name: 'no-history', kind: 'boolean', help: 'keep no trend history' },
  {
    name: 'keep',
    kind: 'string',
    value: 'SPEC',
    help: 'history retention per level, e.g. 1s=3h,1m=14d,1h=400d,spectra=7d (defaults: snap=10m,1s=3h,1m=14d,1h=400d,spectra=2d)',
  },
]);

/** The store a query command reads: --store FILE, else DIR/floorline.sqlite of --data DIR. */
export function storePathFromArgs(f: { store: string | undefined; data: string }): string {
  return f.store ? resolve(f.store) : join(resolve(f.data), STORE_FILE);
}

export interface HistoryChoice {
  path: string;
  retention?: Record<Level, number>;
}

/** What run/replay/demo write to, or undefined with --no-history. `recording` names a replay's own store. */
export function historyFromArgs(
  f: FlagValues<typeof HISTORY_FLAGS>,
  command: 'run' | 'replay' | 'demo',
  dataDir: string,
  recording?: string,
): HistoryChoice | undefined {
  if (f['no-history']) {
    if (f.store) throw new UsageError(`floorline ${command}: give --store FILE or --no-history, not both.`);
    return undefined;
  }
  let retention: Record<Level, number> | undefined;
  if (f.keep !== undefined) {
    try {
      retention = parseRetention(f.keep);
    } catch (err) {
      throw new UsageError(`floorline ${command}: --keep: ${(err as Error).message}.`);
    }
  }
  if (f.store) return { path: resolve(f.store), retention };
  const root = resolve(dataDir);
  if (command === 'run') return { path: join(root, STORE_FILE), retention };
  if (command === 'demo') return { path: join(root, 'replays', 'demo.sqlite'), retention };
  const stamp = new Date()
    .toISOString()
    .replace(/[-:]/g, '')
    .replace(/\.\d+Z$/, 'Z');
  const name = basename(recording ?? 'replay')
    .replace(/\.(wav|rf64)$/i, '')
    .replace(/[^A-Za-z0-9._-]/g, '_');
  return { path: join(root, 'replays', `${name}-${stamp}.sqlite`), retention };
}

/** The session's history option: the choice plus what feeds the pipeline and the bands to trend. */
export function withSource(
  choice: HistoryChoice | undefined,
  source: string,
  bands?: readonly { low: number; high: number }[],
):
  | {
      path: string;
      source: string;
      retention?: Record<Level, number>;
      bands?: readonly { low: number; high: number }[];
    }
  | undefined {
  return choice ? { ...choice, source, ...(bands?.length ? { bands } : {}) } : undefined;
}
