// Reading the kept spectra (table spectra, schema 2): the rows of a span for the waterfall, bounded by merging
// neighbours (pointwise max, the waterfall's own rule across snapshots), and the one nearest a time.
import type { StoreDb } from './open-store.ts';
import { boundSample, type TimeBound } from './time-bound.ts';
import { FloorlineError } from '../errors.ts';
import type { SpectraReply, SpectrumReply, StoredSpectrumJson } from '../../protocol/spectra.ts';

export class SpectraQueryError extends FloorlineError {
  override readonly name = 'SpectraQueryError';
  constructor(
    message: string,
    readonly missing = false,
  ) {
    super('TREND_QUERY', message); // the same kind of failure: a history query the store cannot answer
  }
}

interface RunRow {
  id: number;
  sampleRate: number;
  firstSample: number;
  startWallMs: number;
  settings: string;
}

type Raw = [sample: number, wallMs: number, unit: string, fLow: number, fHigh: number, density: Buffer];

const COLUMNS = 'sample, wall_ms, unit, f_low, f_high, density';

function hasSpectra(db: StoreDb): boolean {
  return db.prepare("SELECT 1 FROM sqlite_schema WHERE type = 'table' AND name = 'spectra'").get() !== undefined;
}

function runs(db: StoreDb): RunRow[] {
  return (
    db.prepare('SELECT id, sample_rate, first_sample, start_wall_ms, settings FROM runs ORDER BY id').all() as {
      id: number;
      sample_rate: number;
      first_sample: number;
      start_wall_ms: number;
      settings: string;
    }[]
  ).map((r) => ({
    id: r.id,
    sampleRate: r.sample_rate,
    firstSample: r.first_sample,
    startWallMs: r.start_wall_ms,
    settings: r.settings,
  }));
}

/** The channel asked for, or the first one kept; refuses an unknown name, listing the kept ones. */
function channelOf(db: StoreDb, channel: string | undefined): string {
  if (!hasSpectra(db))
    throw new SpectraQueryError(
      'this history store keeps no spectra yet (schema 1); an agent of this version adds them when it next opens the store',
      true,
    );
  const names = (db.prepare('SELECT DISTINCT channel FROM spectra').raw(true).all() as [string][]).map((r) => r[0]);
  if (channel === undefined) {
    if (names.length === 0) throw new SpectraQueryError('no spectra kept yet (one is kept every few seconds)', true);
    return names[0];
  }
  if (!names.includes(channel))
    throw new SpectraQueryError(
      `no spectra of channel '${channel}' in the store; it keeps ${names.length ? names.map((n) => `'${n}'`).join(', ') : 'none yet'}`,
      names.length === 0,
    );
  return channel;
}

function densityOf(blob: Buffer): Float32Array {
  // A copy: the Buffer's offset need not be 4-byte aligned.
  const out = new Float32Array(blob.byteLength / 4);
  new Uint8Array(out.buffer).set(blob);
  return out;
}

function toJson(r: Raw, run: RunRow, density: ArrayLike<number>): StoredSpectrumJson {
  return {
    t: r[0] / run.sampleRate,
    sample: r[0],
    wallTime: new Date(r[1]).toISOString(),
    fLow: r[3],
    fHigh: r[4],
    // float32 holds about 7 significant digits; more would only be noise in the JSON.
    density: Array.from(density, (v) => Number(v.toPrecision(7))),
  };
}

/** Sample range [lo, hi] of a run inside the bounds (hi = Infinity when open). */
function sampleRange(run: RunRow, from?: TimeBound, to?: TimeBound): [number, number] {
  return [from ? Math.ceil(boundSample(from, run)) : -Infinity, to ? Math.floor(boundSample(to, run)) : Infinity];
}

export interface SpectraRequest {
  channel?: string;
  from?: TimeBound;
  to?: TimeBound;
  /** Largest number of rows; more are merged in groups of neighbours (pointwise max). */
  rows: number;
}

export function querySpectra(db: StoreDb, q: SpectraRequest): SpectraReply {
  const channel = channelOf(db, q.channel);
  const select = db
    .prepare(
      `SELECT ${COLUMNS} FROM spectra WHERE run = ? AND channel = ? AND sample >= ? AND sample <= ? ORDER BY sample`,
    )
    .raw(true);
  const found: { raw: Raw; run: RunRow }[] = [];
  let unit = '';
  for (const run of runs(db)) {
    const [lo, hi] = sampleRange(run, q.from, q.to);
    if (hi < lo) continue;
    for (const raw of select.all(
      run.id,
      channel,
      Math.max(lo, -Number.MAX_SAFE_INTEGER),
      Math.min(hi, Number.MAX_SAFE_INTEGER),
    ) as Raw[]) {
      found.push({ raw, run });
      unit = raw[2];
    }
  }
  const size = Math.max(1, Math.ceil(found.length / q.rows));
  const rows: StoredSpectrumJson[] = [];
  // Groups end at the newest row, so the latest spectrum is always a row of its own when size > 1 leaves a remainder.
  for (let end = found.length; end > 0; end -= size) {
    const group = found.slice(Math.max(0, end - size), end);
    const last = group[group.length - 1];
    const d = densityOf(last.raw[5]);
    // Only rows on the same grid merge (a settings change moves fLow); others keep the newest row's values.
    for (const g of group.slice(0, -1))
      if (g.raw[3] === last.raw[3] && g.raw[4] === last.raw[4] && g.raw[5].byteLength === last.raw[5].byteLength) {
        const e = densityOf(g.raw[5]);
        for (let j = 0; j < d.length; j++) if (e[j] > d[j]) d[j] = e[j];
      }
    rows.push(toJson(last.raw, last.run, d));
  }
  rows.reverse();
  return { channel, unit, merged: size, rows };
}

/** The kept spectrum nearest `at` (by wall time), with its run's analysis settings. */
export function nearestSpectrum(db: StoreDb, at: TimeBound, channel?: string): SpectrumReply {
  const ch = channelOf(db, channel);
  const before = db
    .prepare(
      `SELECT ${COLUMNS} FROM spectra WHERE run = ? AND channel = ? AND sample <= ? ORDER BY sample DESC LIMIT 1`,
    )
    .raw(true);
  const after = db
    .prepare(`SELECT ${COLUMNS} FROM spectra WHERE run = ? AND channel = ? AND sample >= ? ORDER BY sample LIMIT 1`)
    .raw(true);
  let best: { raw: Raw; run: RunRow; offsetMs: number } | undefined;
  for (const run of runs(db)) {
    const target = boundSample(at, run);
    const targetMs = run.startWallMs + ((target - run.firstSample) / run.sampleRate) * 1000;
    for (const stmt of [before, after]) {
      const raw = stmt.get(run.id, ch, Math.round(target)) as Raw | undefined;
      if (!raw) continue;
      const offsetMs = raw[1] - targetMs;
      if (!best || Math.abs(offsetMs) < Math.abs(best.offsetMs)) best = { raw, run, offsetMs };
    }
  }
  if (!best) throw new SpectraQueryError(`no spectra of channel '${ch}' kept yet`, true);
  return {
    channel: ch,
    unit: best.raw[2],
    offsetSeconds: best.offsetMs / 1000,
    settings: JSON.parse(best.run.settings) as Record<string, unknown>,
    ...toJson(best.raw, best.run, densityOf(best.raw[5])),
  };
}
