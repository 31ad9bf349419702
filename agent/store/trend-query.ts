// The trend query behind `floorline trend` and /api/trend: rows of one level for the chosen series, runs in the
// order they were written, with a gap row (min/mean/max null, gap true) at the start of every break: missing
// intervals inside a run (a gap in the samples, history not stored) and the downtime between runs. Bounded
// output: `points` merges neighbouring rows (n-weighted mean power, min of min, max of max).
import type { StoreDb } from './open-store.ts';
import type { Level } from './schema.ts';
import { boundSample, wallAt, type RunTiming, type TimeBound } from './time-bound.ts';
import { FloorlineError } from '../errors.ts';

export type Every = Exclude<Level, 'snap'>;
export const EVERY_CHOICES: readonly Every[] = ['1s', '1m', '1h'];
export const TREND_QUANTITIES = ['bandRms', 'floorDensity'] as const;

export interface TrendRequest {
  channel?: string;
  band?: { low: number; high: number };
  from?: TimeBound;
  to?: TimeBound;
  every: Every;
  /** Largest number of rows per series (merging neighbours); absent: all. */
  points?: number;
  quantities?: readonly string[];
}

export interface TrendRow {
  t: number;
  sample: number;
  wallTime: string;
  min: number | null;
  mean: number | null;
  max: number | null;
  gap: boolean;
}

export interface TrendSeries {
  channel: string;
  quantity: string;
  band: [number, number] | null;
  unit: string;
  rows: TrendRow[];
}

export interface TrendResult {
  every: Every;
  series: TrendSeries[];
}

export class TrendQueryError extends FloorlineError {
  override readonly name = 'TrendQueryError';
  constructor(message: string) {
    super('TREND_QUERY', message);
  }
}

interface SeriesRow {
  id: number;
  channel: string;
  quantity: string;
  band_low: number | null;
  band_high: number | null;
  unit: string;
}

interface RunRow extends RunTiming {
  id: number;
  length: number;
}

/** A requested band matches a stored one when both edges agree within 0.5 % (stored edges sit on bins). */
function bandMatches(s: SeriesRow, b: { low: number; high: number }): boolean {
  if (s.band_low === null || s.band_high === null) return false;
  const near = (a: number, x: number) => Math.abs(a - x) <= 0.005 * Math.max(Math.abs(x), 1);
  return near(s.band_low, b.low) && near(s.band_high, b.high);
}

export function queryTrend(db: StoreDb, q: TrendRequest): TrendResult {
  const quantities = q.quantities ?? TREND_QUANTITIES;
  const all = db
    .prepare('SELECT id, channel, quantity, band_low, band_high, unit FROM series ORDER BY id')
    .all() as SeriesRow[];
  let chosen = all.filter(
    (s) => quantities.includes(s.quantity) && (q.channel === undefined || s.channel === q.channel),
  );
  if (q.channel !== undefined && chosen.length === 0) {
    const names = [...new Set(all.map((s) => s.channel))];
    throw new TrendQueryError(
      `floorline trend: no channel '${q.channel}' in the store; it has ${names.length ? names.map((n) => `'${n}'`).join(', ') : 'no channels yet'}.`,
    );
  }
  if (q.band) {
    const band = q.band;
    const bands = chosen.filter((s) => s.quantity === 'bandRms');
    const hit = bands.filter((s) => bandMatches(s, band));
    if (hit.length === 0) {
      const listed = [...new Set(bands.map((s) => `${s.band_low}:${s.band_high}`))];
      throw new TrendQueryError(
        `floorline trend: no band ${band.low}:${band.high} Hz in the store; it keeps ${listed.length ? listed.join(', ') : 'no bands'} (give one of these to --band).`,
      );
    }
    chosen = chosen.filter((s) => s.quantity !== 'bandRms' || bandMatches(s, band));
  }
  const runs = (
    db.prepare('SELECT id, sample_rate, first_sample, start_wall_ms, level_samples FROM runs ORDER BY id').all() as {
      id: number;
      sample_rate: number;
      first_sample: number;
      start_wall_ms: number;
      level_samples: string;
    }[]
  ).map((r): RunRow => ({
    id: r.id,
    sampleRate: r.sample_rate,
    firstSample: r.first_sample,
    startWallMs: r.start_wall_ms,
    length: (JSON.parse(r.level_samples) as Record<Level, number>)[q.every],
  }));
  // Raw rows (arrays, not objects): a week of minutes is 10 080 rows per series.
  const select = db
    .prepare(
      `SELECT k, n, power, min, max FROM trend_${q.every} WHERE series = ? AND run = ? AND k >= ? AND k < ? ORDER BY k`,
    )
    .raw(true);
  const series = chosen.map((s): TrendSeries => {
    const rows: (TrendRow & { n: number; power: number })[] = [];
    let pendingBreak: { run: RunRow; k: number } | undefined;
    for (const run of runs) {
      const lo = q.from ? Math.max(0, Math.ceil(boundSample(q.from, run) / run.length)) : 0;
      const hi = q.to ? Math.ceil(boundSample(q.to, run) / run.length) : Number.MAX_SAFE_INTEGER;
      if (hi <= lo) continue;
      const found = select.all(s.id, run.id, lo, hi) as [
        k: number,
        n: number,
        power: number,
        min: number,
        max: number,
      ][];
      if (found.length === 0) continue;
      if (pendingBreak) rows.push(gapRow(pendingBreak.run, pendingBreak.k));
      let prev = -1;
      for (const [k, n, power, min, max] of found) {
        if (prev >= 0 && k > prev + 1) rows.push(gapRow(run, prev + 1));
        const sample = k * run.length;
        rows.push({
          t: sample / run.sampleRate,
          sample,
          wallTime: wallAt(run, sample),
          min,
          mean: Math.sqrt(power),
          max,
          gap: false,
          n,
          power,
        });
        prev = k;
      }
      pendingBreak = { run, k: prev + 1 };
    }
    const merged = q.points !== undefined && rows.length > q.points ? mergeRows(rows, q.points) : rows;
    return {
      channel: s.channel,
      quantity: s.quantity,
      band: s.band_low === null ? null : [s.band_low, s.band_high!],
      unit: s.unit,
      rows: merged.map(({ t, sample, wallTime, min, mean, max, gap }) => ({
        t,
        sample,
        wallTime,
        min,
        mean,
        max,
        gap,
      })),
    };
  });
  return { every: q.every, series };
}

function gapRow(run: RunRow, k: number): TrendRow & { n: number; power: number } {
  const sample = k * run.length;
  return {
    t: sample / run.sampleRate,
    sample,
    wallTime: wallAt(run, sample),
    min: null,
    mean: null,
    max: null,
    gap: true,
    n: 0,
    power: 0,
  };
}

/** Merges neighbouring rows into at most `points` rows. A gap row is never merged away while there is room: it
 *  closes the group before it and stays, so a break shows at every zoom. With more breaks than room, groups of
 *  equal size are merged and a group is a gap only if every member is. */
function mergeRows(
  rows: (TrendRow & { n: number; power: number })[],
  points: number,
): (TrendRow & { n: number; power: number })[] {
  const gaps = rows.reduce((a, r) => a + (r.gap ? 1 : 0), 0);
  // Data groups: at most rows/size full ones, plus one cut short by each gap and the last; then the gap rows.
  const room = points - 2 * gaps - 1;
  if (room < 1) return mergeEqualGroups(rows, Math.ceil(rows.length / points));
  const size = Math.ceil(rows.length / room);
  const out: (TrendRow & { n: number; power: number })[] = [];
  let group: (TrendRow & { n: number; power: number })[] = [];
  const close = (): void => {
    if (group.length) out.push(mergedRow(group));
    group = [];
  };
  for (const r of rows) {
    if (r.gap) {
      close();
      out.push(r);
      continue;
    }
    group.push(r);
    if (group.length >= size) close();
  }
  close();
  return out;
}

function mergeEqualGroups(
  rows: (TrendRow & { n: number; power: number })[],
  size: number,
): (TrendRow & { n: number; power: number })[] {
  const out: (TrendRow & { n: number; power: number })[] = [];
  for (let i = 0; i < rows.length; i += size) {
    const group = rows.slice(i, i + size);
    const data = group.filter((r) => !r.gap);
    out.push(data.length === 0 ? group[0] : { ...mergedRow(data), ...pick(group[0]) });
  }
  return out;
}

/** A group's first row's time stamps. */
function pick(r: TrendRow): Pick<TrendRow, 't' | 'sample' | 'wallTime'> {
  return { t: r.t, sample: r.sample, wallTime: r.wallTime };
}

/** One row for data rows: the mean power weighted by segment counts (its square root the RMS), min and max. */
function mergedRow(data: (TrendRow & { n: number; power: number })[]): TrendRow & { n: number; power: number } {
  const n = data.reduce((a, r) => a + r.n, 0);
  const power = data.reduce((a, r) => a + r.n * r.power, 0) / n;
  return {
    ...data[0],
    n,
    power,
    gap: false,
    mean: Math.sqrt(power),
    min: Math.min(...data.map((r) => r.min!)),
    max: Math.max(...data.map((r) => r.max!)),
  };
}
