// Everything the report shows, read from the history store for one span: runs, trend rows at a resolution that
// keeps the row count bounded, incidents with notes, health counts from the events, unstored spans.
import type { StoreDb } from '../store/open-store.ts';
import { queryTrend, type Every, type TrendSeries } from '../store/trend-query.ts';
import { iterateIncidents, type IncidentView } from '../store/incident-query.ts';
import { digestIncidents, type IncidentDigest } from './incident-digest.ts';
import { bandKey } from './figures.ts';
import { PLOT_COLUMNS } from './svg-plot.ts';
import type { TimeBound } from '../store/time-bound.ts';
import { FloorlineError } from '../errors.ts';
import { readBaselineChanges, readRunContexts, type BaselineChange, type RunContext } from '../store/run-context.ts';
import { wallAt } from '../store/time-bound.ts';
import { healthInSpan, type RunHealth } from '../store/health.ts';

/** An operator's acknowledge or shelve of an incident, from the events table. */
export interface OperatorAction {
  state: 'acknowledged' | 'shelved';
  t: number;
  wallTime: string;
  /** Shelved until this sample (shelve only). */
  untilSample?: number;
}

export interface ReportIncident extends IncidentView {
  /** Sample of the incident's first settled event, null without one. */
  settledSample: number | null;
  history: OperatorAction[];
}

export interface ReportData {
  runs: {
    id: number;
    command: string;
    source: string;
    pid: number;
    sampleRate: number;
    startWall: string;
    settings: Record<string, unknown>;
    context: RunContext | null;
  }[];
  every: Every;
  from: string;
  to: string;
  fromT: number;
  toT: number;
  series: TrendSeries[];
  /** The listed incidents (the first MAX_INCIDENT_ROWS of the span), with their history. */
  incidents: ReportIncident[];
  unlisted: IncidentDigest['unlisted'];
  /** Incidents' stretches of each channel's trend plots. */
  shading: IncidentDigest['shading'];
  /** Time above threshold per band series (by bandKey), seconds. */
  aboveSeconds: IncidentDigest['aboveSeconds'];
  notes: { text: string; wallTime: string; t: number | null; incident: string | null }[];
  /** Events of the health rules (and retention's deletions) in the span, counted by rule and state. */
  health: { rule: string; state: string; count: number }[];
  /** The agent's counters per run inside the span; null for a store older than the health table. */
  healthRuns: RunHealth[] | null;
  unstored: { from: string; to: string; reason: string }[];
  /** Baselines put in force inside a run (a capture or restore mid-run) up to the span's end, oldest first. */
  baselineChanges: (BaselineChange & { t: number; wallTime: string })[];
}

export class EmptySpanError extends FloorlineError {
  override readonly name = 'EmptySpanError';
  constructor(message: string) {
    super('EMPTY_SPAN', message);
  }
}

/** The coarsest resolution that still gives a few hundred points over the span. */
function everyFor(spanMs: number): Every {
  if (spanMs <= 6 * 3600e3) return '1s';
  if (spanMs <= 86400e3) return '1m';
  return '1h';
}

/** Each incident's settled sample and its acknowledge/shelve history, from the events table. */
function withHistory(db: StoreDb, list: IncidentView[]): ReportIncident[] {
  const settled = db.prepare(
    "SELECT min(sample) AS sample FROM events WHERE incident = ? AND kind = 'alarm' AND state = 'settled'",
  );
  const actions = db.prepare(
    "SELECT state, t, wall_time, json FROM events WHERE incident = ? AND kind = 'info' AND state IN ('acknowledged', 'shelved') ORDER BY id",
  );
  return list.map((i) => ({
    ...i,
    settledSample: (settled.get(i.id) as { sample: number | null }).sample,
    history: (
      actions.all(i.id) as { state: OperatorAction['state']; t: number; wall_time: string; json: string }[]
    ).map((a) => {
      const until = (JSON.parse(a.json) as { shelvedUntilSample?: number }).shelvedUntilSample;
      return { state: a.state, t: a.t, wallTime: a.wall_time, ...(until !== undefined ? { untilSample: until } : {}) };
    }),
  }));
}

export function collectReport(db: StoreDb, from?: TimeBound, to?: TimeBound): ReportData {
  const contexts = readRunContexts(db);
  const runs = (
    db.prepare('SELECT id, command, source, pid, sample_rate, start_wall, settings FROM runs ORDER BY id').all() as {
      id: number;
      pid: number;
      command: string;
      source: string;
      sample_rate: number;
      start_wall: string;
      settings: string;
    }[]
  ).map((r) => ({
    id: r.id,
    command: r.command,
    source: r.source,
    pid: r.pid,
    sampleRate: r.sample_rate,
    startWall: r.start_wall,
    settings: JSON.parse(r.settings),
    context: contexts.get(r.id) ?? null,
  }));
  // The span's extent from one series at the coarsest level that has rows (bounded memory for months), then the
  // resolution that suits it.
  const first = db.prepare("SELECT channel FROM series WHERE quantity = 'bandRms' ORDER BY id LIMIT 1").get() as
    { channel: string } | undefined;
  let rows: { wallTime: string }[] = [];
  let rowMs = 1e3;
  for (const [every, ms] of [
    ['1h', 3600e3],
    ['1m', 60e3],
    ['1s', 1e3],
  ] as const) {
    if (!first) break;
    const probe = queryTrend(db, { channel: first.channel, from, to, every, quantities: ['bandRms'] });
    rows = probe.series.flatMap((s) => s.rows.filter((r) => !r.gap));
    rowMs = ms;
    if (rows.length) break;
  }
  // A first pass over the incidents for their extent only (a second one below digests them).
  let incidentFrom = Infinity;
  let incidentTo = -Infinity;
  let startsInside = 0;
  for (const i of iterateIncidents(db, from, to)) {
    const start = Date.parse(i.start.wallTime);
    incidentFrom = Math.min(incidentFrom, start);
    incidentTo = Math.max(incidentTo, Date.parse(i.end?.wallTime ?? i.start.wallTime));
    // An incident still open at the end of the store overlaps every later span: it alone does not make data.
    if (!from || (from.kind === 'wall' ? start >= from.ms : i.start.t >= from.seconds)) startsInside++;
  }
  if (rows.length === 0 && startsInside === 0) {
    throw new EmptySpanError(
      'floorline report: the store holds no trend rows and no incidents in this span; widen --from/--to (see `floorline trend --every 1h`).',
    );
  }
  const minOf = (xs: Iterable<number>, start: number) => {
    let m = start;
    for (const x of xs) if (x < m) m = x;
    return m;
  };
  const maxOf = (xs: Iterable<number>, start: number) => {
    let m = start;
    for (const x of xs) if (x > m) m = x;
    return m;
  };
  const walls = rows.map((r) => Date.parse(r.wallTime));
  let fromMs = from?.kind === 'wall' ? from.ms : minOf(walls, incidentFrom);
  let toMs =
    to?.kind === 'wall'
      ? to.ms
      : maxOf(
          walls.map((w) => w + rowMs),
          incidentTo,
        );
  const every = everyFor(toMs - fromMs);
  const trend = queryTrend(db, { from, to, every, points: 1500 });
  let fromT = Infinity;
  let toT = -Infinity;
  let fineFrom = Infinity;
  let fineTo = -Infinity;
  for (const s of trend.series)
    for (const r of s.rows) {
      if (r.t < fromT) fromT = r.t;
      if (r.t > toT) toT = r.t;
      if (r.gap) continue;
      // Without wall bounds, the extent is where the chosen resolution has rows (the coarse probe rounds to its level).
      const w = Date.parse(r.wallTime);
      if (w < fineFrom) fineFrom = w;
      if (w > fineTo) fineTo = w;
    }
  if (fromT > toT) fromT = toT = 0;
  // Bounds given in sample time are the span asked for (the dashboard's timeline sends its own): shown as given.
  if (from?.kind === 't') fromT = from.seconds;
  if (to?.kind === 't') toT = to.seconds;
  const step = { '1s': 1e3, '1m': 60e3, '1h': 3600e3 }[every];
  if (fineFrom <= fineTo && from?.kind !== 'wall') fromMs = Math.min(fineFrom, incidentFrom);
  if (fineFrom <= fineTo && to?.kind !== 'wall') toMs = Math.max(fineTo + step, incidentTo);
  const bands = trend.series
    .filter((s) => s.quantity === 'bandRms' && s.band)
    .map((s) => ({ key: bandKey(s.channel, s.band!), channel: s.channel, band: s.band! }));
  const digest = digestIncidents(iterateIncidents(db, from, to), {
    x0: fromMs,
    x1: toMs,
    columns: PLOT_COLUMNS,
    openEndMs: toMs,
    openEndT: toT,
    bands,
  });
  const notes = (
    db.prepare('SELECT text, wall_time, t, incident FROM notes ORDER BY id').all() as {
      text: string;
      wall_time: string;
      t: number | null;
      incident: string | null;
    }[]
  )
    .map((n) => ({ text: n.text, wallTime: n.wall_time, t: n.t, incident: n.incident }))
    .filter((n) => Date.parse(n.wallTime) >= fromMs - 1 && Date.parse(n.wallTime) <= toMs + 1);
  const health = db
    .prepare(
      `SELECT rule, state, count(*) AS count FROM events WHERE ((kind = 'alarm' AND rule IN ('gap', 'link', 'clip', 'overrun', 'disk'))
      OR (kind = 'info' AND rule = 'retention')) AND wall_time >= ? AND wall_time <= ? GROUP BY rule, state ORDER BY rule, state`,
    )
    .all(new Date(fromMs).toISOString(), new Date(toMs).toISOString()) as ReportData['health'];
  const unstored = (
    db.prepare('SELECT from_wall, to_wall, reason FROM unstored ORDER BY from_wall').all() as {
      from_wall: string;
      to_wall: string;
      reason: string;
    }[]
  ).map((u) => ({ from: u.from_wall, to: u.to_wall, reason: u.reason }));
  const timing = new Map(
    (
      db.prepare('SELECT id, sample_rate, first_sample, start_wall_ms FROM runs').all() as {
        id: number;
        sample_rate: number;
        first_sample: number;
        start_wall_ms: number;
      }[]
    ).map((r) => [r.id, { sampleRate: r.sample_rate, firstSample: r.first_sample, startWallMs: r.start_wall_ms }]),
  );
  const baselineChanges = readBaselineChanges(db)
    .filter((c) => timing.has(c.run))
    .map((c) => {
      const run = timing.get(c.run)!;
      return { ...c, t: c.sample / run.sampleRate, wallTime: wallAt(run, c.sample) };
    })
    .filter((c) => Date.parse(c.wallTime) <= toMs);
  return {
    runs,
    every,
    from: new Date(fromMs).toISOString(),
    to: new Date(toMs).toISOString(),
    fromT,
    toT,
    series: trend.series,
    incidents: withHistory(db, digest.listed),
    unlisted: digest.unlisted,
    shading: digest.shading,
    aboveSeconds: digest.aboveSeconds,
    notes,
    health,
    healthRuns: healthInSpan(db, from, to),
    unstored,
    baselineChanges,
  };
}
