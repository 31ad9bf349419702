// The agent's health counters in the store (schema 3, table `health`): what the report's Health section needs and
// no event carries (samples delivered, CRC and malformed frames, dropped blocks, clipped samples, files deleted by
// retention). The monitor hands the writer its counters since the process began; each run keeps them counted from
// its own start, the latest reading of every minute of sample time.
import type { StoreDb } from './open-store.ts';
import type { AgentStatus } from '../../protocol/messages.ts';
import { boundSample, type TimeBound } from './time-bound.ts';

/** The status counters the store keeps (same names and meaning as in /api/status), and what status lacks. */
export type HealthCounters = Pick<
  AgentStatus,
  'samples' | 'gaps' | 'lostSamples' | 'crcErrors' | 'syncErrors' | 'nonfiniteFrames' | 'droppedBlocks'
> & {
  /** Newest sample delivered (-1 before any). */
  lastSample: number;
  droppedSamples: number;
  clippedSamples: number;
  deletedFiles: number;
};

/** The counted fields, in the table's column order. */
export const HEALTH_FIELDS = [
  ['samples', 'samples'],
  ['gaps', 'gaps'],
  ['lostSamples', 'lost_samples'],
  ['crcErrors', 'crc_errors'],
  ['syncErrors', 'sync_errors'],
  ['nonfiniteFrames', 'nonfinite_frames'],
  ['droppedBlocks', 'dropped_blocks'],
  ['droppedSamples', 'dropped_samples'],
  ['clippedSamples', 'clipped_samples'],
  ['deletedFiles', 'deleted_files'],
] as const;

export type HealthField = (typeof HEALTH_FIELDS)[number][0];
export type HealthCounts = Record<HealthField, number>;

export const HEALTH_INSERT = `INSERT OR REPLACE INTO health (run, k, sample, ${HEALTH_FIELDS.map((f) => f[1]).join(', ')})
  VALUES (${Array(3 + HEALTH_FIELDS.length)
    .fill('?')
    .join(', ')})`;

/** The counts of `now` since `base` (the reading when the run began). */
export function countsSince(now: HealthCounters, base: HealthCounters | undefined): HealthCounts {
  const out = {} as HealthCounts;
  for (const [f] of HEALTH_FIELDS) out[f] = now[f] - (base?.[f] ?? 0);
  return out;
}

export const zeroCounts = (): HealthCounts => countsSince(emptyCounters(), undefined);

export function emptyCounters(): HealthCounters {
  return {
    lastSample: -1,
    samples: 0,
    gaps: 0,
    lostSamples: 0,
    crcErrors: 0,
    syncErrors: 0,
    nonfiniteFrames: 0,
    droppedBlocks: 0,
    droppedSamples: 0,
    clippedSamples: 0,
    deletedFiles: 0,
  };
}

export interface RunHealth {
  run: number;
  pid: number;
  /** Counts inside the span (to the minute: the difference of the readings at its ends). */
  counts: HealthCounts;
}

/** Per run, the counts inside [from, to]; null when the store predates the health table (schema < 3). */
export function healthInSpan(db: StoreDb, from?: TimeBound, to?: TimeBound): RunHealth[] | null {
  const has = db.prepare("SELECT 1 FROM sqlite_schema WHERE type = 'table' AND name = 'health'").get();
  if (!has) return null;
  const runs = db.prepare('SELECT id, pid, sample_rate, first_sample, start_wall_ms FROM runs ORDER BY id').all() as {
    id: number;
    pid: number;
    sample_rate: number;
    first_sample: number;
    start_wall_ms: number;
  }[];
  const cols = HEALTH_FIELDS.map((f) => f[1]).join(', ');
  const before = db.prepare(`SELECT ${cols} FROM health WHERE run = ? AND sample < ? ORDER BY k DESC LIMIT 1`).raw();
  const upTo = db.prepare(`SELECT ${cols} FROM health WHERE run = ? AND sample <= ? ORDER BY k DESC LIMIT 1`).raw();
  const out: RunHealth[] = [];
  for (const r of runs) {
    const timing = { sampleRate: r.sample_rate, firstSample: r.first_sample, startWallMs: r.start_wall_ms };
    const lo = from ? boundSample(from, timing) : -Infinity;
    const hi = to ? boundSample(to, timing) : Number.MAX_SAFE_INTEGER;
    const end = upTo.get(r.id, Math.min(hi, Number.MAX_SAFE_INTEGER)) as number[] | undefined;
    if (!end) continue;
    const start = Number.isFinite(lo) ? (before.get(r.id, lo) as number[] | undefined) : undefined;
    if (start && start.every((v, i) => v === end[i])) continue;
    const counts = {} as HealthCounts;
    HEALTH_FIELDS.forEach(([f], i) => (counts[f] = end[i] - (start?.[i] ?? 0)));
    out.push({ run: r.id, pid: r.pid, counts });
  }
  return out;
}
