// What a run compared against and how it was set up, beyond its analysis settings: the data folder (where its
// captures are), the rig's channels, the averaging, the baseline file and the rig config with their hashes. Kept
// in the store's meta table under `run:ID:context` (one JSON value per run), so stores of schema 1 need no
// migration and older readers are not refused. The report reads it for its header, baseline figures and captures.
import { createHash } from 'node:crypto';
import { readFileSync } from 'node:fs';
import type { AveragingSpec } from '../../protocol/settings.ts';
import type { ChannelInfo } from '../../protocol/stream.ts';
import type { StoreDb } from './open-store.ts';

export interface FileRef {
  /** Absolute path as the run saw it. */
  path: string;
  /** SHA-256 of the file's bytes when the run started (null when it could not be read). */
  sha256: string | null;
}

export interface RunContext {
  dataDir: string;
  boardId?: string;
  firmware?: string;
  channels: ChannelInfo[];
  averaging: AveragingSpec;
  /** The baseline file and its settings hash (the hash the baseline format keeps), or null without one. */
  baseline: (FileRef & { settingsHash: string }) | null;
  config: FileRef | null;
}

/** SHA-256 (hex) of a file's bytes, null when it cannot be read. */
export function fileSha256(path: string): string | null {
  try {
    return createHash('sha256').update(readFileSync(path)).digest('hex');
  } catch {
    return null;
  }
}

export const contextKey = (run: number) => `run:${run}:context`;

/** A baseline change inside a run, kept as meta `run:ID:baseline:SAMPLE` (the run's context holds the first). */
export const baselineChangeKey = (run: number, sample: number) => `run:${run}:baseline:${sample}`;

export interface BaselineChange {
  run: number;
  /** Compared against from this sample on. */
  sample: number;
  baseline: RunContext['baseline'];
}

/** Every baseline change inside a run, in run and sample order. */
export function readBaselineChanges(db: StoreDb): BaselineChange[] {
  const rows = db.prepare("SELECT key, value FROM meta WHERE key LIKE 'run:%:baseline:%'").all() as {
    key: string;
    value: string;
  }[];
  const out: BaselineChange[] = [];
  for (const r of rows) {
    const [, run, , sample] = r.key.split(':');
    try {
      out.push({ run: Number(run), sample: Number(sample), baseline: JSON.parse(r.value) as RunContext['baseline'] });
    } catch {
      // A damaged value only costs the report that change.
    }
  }
  return out.sort((a, b) => a.run - b.run || a.sample - b.sample);
}

/** The context of every run that has one, by run id. */
export function readRunContexts(db: StoreDb): Map<number, RunContext> {
  const rows = db.prepare("SELECT key, value FROM meta WHERE key LIKE 'run:%:context'").all() as {
    key: string;
    value: string;
  }[];
  const out = new Map<number, RunContext>();
  for (const r of rows) {
    const id = Number(r.key.split(':')[1]);
    try {
      out.set(id, JSON.parse(r.value) as RunContext);
    } catch {
      // A damaged value only costs the report that run's header lines.
    }
  }
  return out;
}
