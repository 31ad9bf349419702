// Writes the history store: runs, series, trend rows, events, incidents and notes, batched in one transaction at
// least once a second (so kill -9 loses at most the last second), with prepared statements only. When the disk
// refuses writes (read-only, full, I/O error) the monitor goes on: history is dropped and the span recorded once a
// write succeeds again; the problem is told once, not once per flush.
import type { StoreDb } from './open-store.ts';
import { LEVELS, type Level } from './schema.ts';
import { RowBuffer } from './row-buffer.ts';
import { DEFAULT_RETENTION, SPECTRA_RETENTION_SECONDS, type Retention } from './levels.ts';
import type { IncidentRecord } from './incident-book.ts';
import { baselineChangeKey, contextKey, type RunContext } from './run-context.ts';
import { countsSince, HEALTH_FIELDS, HEALTH_INSERT, type HealthCounters } from './health.ts';

export interface RunInfo {
  command: string;
  source: string;
  sampleRate: number;
  firstSample: number;
  startWallMs: number;
  settings: object;
  levelSamples: Record<Level, number>;
  /** Baseline, config, channels and data folder of the run (meta `run:ID:context`). */
  context?: RunContext;
}

interface OpenRun extends RunInfo {
  id: number;
}

export interface WriterOptions {
  warn: (message: string) => void;
  retention?: Retention;
  /** Wall ms between retries after a failed write (default 5000). */
  retryMs?: number;
  /** The agent's health counters since the process began, read at each run's start and each commit. */
  health?: () => HealthCounters;
}

type Op = { sql: 'event' | 'note' | 'incident' | 'spectrum' | 'context'; args: unknown[] };

const MAX_QUEUED_OPS = 100_000;

/** SQLite result codes meaning "the disk will not take it" rather than a bug of ours. */
function isStorageFault(err: unknown): boolean {
  const code = (err as { code?: string }).code ?? '';
  return /^SQLITE_(READONLY|FULL|IOERR|CANTOPEN|BUSY|LOCKED|PERM|NOMEM)/.test(code);
}

export class HistoryWriter {
  readonly rows = new RowBuffer();
  private readonly ops: Op[] = [];
  private readonly insertRow: Record<Level, import('better-sqlite3').Statement>;
  private readonly stmt;
  private readonly retention: Retention;
  private readonly retryMs: number;
  private run: OpenRun | undefined;
  /** The health counters when the current run began: the run's counts are the readings less these. */
  private healthBase: HealthCounters | undefined;
  private failing:
    { since: number; firstSample: number; lastSample: number; reason: string; nextTry: number } | undefined;
  private lastRetentionMs = 0;
  latestWallMs = 0;
  flushes = 0;
  /** performance.now() of the last commit, or of opening the store (for the commit watchdog). */
  lastCommitMs = performance.now();
  lastCommitWallMs: number | null = null;
  closed = false;

  constructor(
    readonly db: StoreDb,
    private readonly options: WriterOptions,
  ) {
    this.retention = options.retention ?? DEFAULT_RETENTION;
    this.retryMs = options.retryMs ?? 5000;
    this.insertRow = Object.fromEntries(
      LEVELS.map((l) => [
        l,
        db.prepare(
          `INSERT OR REPLACE INTO trend_${l} (series, run, k, n, power, min, max) VALUES (?, ?, ?, ?, ?, ?, ?)`,
        ),
      ]),
    ) as Record<Level, import('better-sqlite3').Statement>;
    this.stmt = {
      run: db.prepare(
        'INSERT INTO runs (command, source, pid, sample_rate, first_sample, start_wall_ms, start_wall, settings, level_samples) VALUES (?, ?, ?, ?, ?, ?, ?, ?, ?)',
      ),
      context: db.prepare('INSERT OR REPLACE INTO meta (key, value) VALUES (?, ?)'),
      seriesFind: db.prepare(
        'SELECT id FROM series WHERE channel = ? AND quantity = ? AND band_low IS ? AND band_high IS ?',
      ),
      seriesAdd: db.prepare('INSERT INTO series (channel, quantity, band_low, band_high, unit) VALUES (?, ?, ?, ?, ?)'),
      event: db.prepare(
        'INSERT INTO events (run, sample, t, wall_time, kind, rule, state, channel, incident, json) VALUES (?, ?, ?, ?, ?, ?, ?, ?, ?, ?)',
      ),
      note: db.prepare('INSERT INTO notes (run, sample, t, wall_time, text, incident) VALUES (?, ?, ?, ?, ?, ?)'),
      incident: db.prepare(
        `INSERT OR REPLACE INTO incidents (id, run, channel, rules, members, start_sample, start_t, start_wall, end_sample, end_t, end_wall,
           settled, peak, acknowledged, capture) VALUES (?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?, ?)`,
      ),
      spectrum: db.prepare(
        'INSERT OR REPLACE INTO spectra (run, sample, channel, wall_ms, unit, f_low, f_high, density) VALUES (?, ?, ?, ?, ?, ?, ?, ?)',
      ),
      pruneSpectra: db.prepare('DELETE FROM spectra WHERE wall_ms < ?'),
      health: db.prepare(HEALTH_INSERT),
      unstored: db.prepare(
        'INSERT INTO unstored (run, from_sample, to_sample, from_wall, to_wall, reason) VALUES (?, ?, ?, ?, ?, ?)',
      ),
      runs: db.prepare('SELECT id, sample_rate, first_sample, start_wall_ms, level_samples FROM runs'),
      seriesIds: db.prepare('SELECT id FROM series'),
      maxK: (l: Level) => db.prepare(`SELECT max(k) AS k FROM trend_${l} WHERE run = ?`),
      prune: (l: Level) => db.prepare(`DELETE FROM trend_${l} WHERE series = ? AND run = ? AND k < ?`),
      pruneSnap: db.prepare('DELETE FROM trend_snap WHERE run = ? AND k < ?'),
    };
    this.repairRollups();
  }

  /** Trend rows and records waiting for the next commit. */
  get pending(): number {
    return this.rows.length + this.ops.length;
  }

  get runId(): number | undefined {
    return this.run?.id;
  }

  get runInfo(): OpenRun | undefined {
    return this.run;
  }

  /** True while writes fail (history is not being kept). */
  get storing(): boolean {
    return this.failing === undefined;
  }

  /** Starts a run (a new stream or new analysis settings); the previous one's rows must be flushed first. */
  beginRun(info: RunInfo): number {
    const r = this.stmt.run.run(
      info.command,
      info.source,
      process.pid,
      info.sampleRate,
      info.firstSample,
      info.startWallMs,
      new Date(info.startWallMs).toISOString(),
      JSON.stringify(info.settings),
      JSON.stringify(info.levelSamples),
    );
    this.run = { ...info, id: Number(r.lastInsertRowid) };
    this.healthBase = this.options.health?.();
    if (info.context) this.stmt.context.run(contextKey(this.run.id), JSON.stringify(info.context));
    return this.run.id;
  }

  /** The id of a series, creating it on first use. */
  seriesId(channel: string, quantity: string, band: [number, number] | null, unit: string): number {
    const lo = band ? band[0] : null;
    const hi = band ? band[1] : null;
    const found = this.stmt.seriesFind.get(channel, quantity, lo, hi) as { id: number } | undefined;
    if (found) return found.id;
    return Number(this.stmt.seriesAdd.run(channel, quantity, lo, hi, unit).lastInsertRowid);
  }

  wallMsAt(sample: number): number {
    const r = this.run!;
    return r.startWallMs + ((sample - r.firstSample) / r.sampleRate) * 1000;
  }

  event(
    e: {
      kind: string;
      sample: number;
      t: number;
      wallTime: string;
      rule?: string;
      state?: string;
      channel?: string;
      incident?: string;
    },
    json: string,
  ): void {
    this.queue({
      sql: 'event',
      args: [
        this.run?.id ?? 0,
        e.sample,
        e.t,
        e.wallTime,
        e.kind,
        e.rule ?? null,
        e.state ?? null,
        e.channel ?? null,
        e.incident ?? null,
        json,
      ],
    });
  }

  note(n: { sample: number | null; t: number | null; wallTime: string; text: string; incident?: string }): void {
    this.queue({ sql: 'note', args: [this.run?.id ?? null, n.sample, n.t, n.wallTime, n.text, n.incident ?? null] });
  }

  incident(i: IncidentRecord): void {
    this.queue({
      sql: 'incident',
      args: [
        i.id,
        this.run?.id ?? 0,
        i.channel,
        JSON.stringify(i.rules),
        JSON.stringify(i.members),
        i.start.sample,
        i.start.t,
        i.start.wallTime,
        i.end?.sample ?? null,
        i.end?.t ?? null,
        i.end?.wallTime ?? null,
        i.settled ? JSON.stringify(i.settled) : null,
        JSON.stringify(i.peak),
        i.acknowledged ? 1 : 0,
        i.capture,
      ],
    });
  }

  /** The baseline (or none) compared against from `sample` on, when it changes inside the run (a capture, a restore). */
  baselineChange(sample: number, baseline: RunContext['baseline']): void {
    if (!this.run) return;
    this.queue({ sql: 'context', args: [baselineChangeKey(this.run.id, sample), JSON.stringify(baseline)] });
  }

  /** A kept spectrum: `density` (unit²/Hz) on the log grid from fLow to fHigh, stored as float32. */
  spectrum(s: {
    sample: number;
    channel: string;
    unit: string;
    fLow: number;
    fHigh: number;
    density: Float32Array;
  }): void {
    if (!this.run) return;
    const blob = Buffer.from(s.density.buffer, s.density.byteOffset, s.density.byteLength);
    this.queue({
      sql: 'spectrum',
      args: [this.run.id, s.sample, s.channel, this.wallMsAt(s.sample), s.unit, s.fLow, s.fHigh, Buffer.from(blob)],
    });
  }

  private queue(op: Op): void {
    if (this.ops.length >= MAX_QUEUED_OPS) this.ops.shift(); // bounded while the disk refuses; events.jsonl keeps them too
    this.ops.push(op);
  }

  /** Commits everything buffered in one transaction. Never throws for a storage fault (see class note). */
  flush(nowMs = Date.now()): void {
    if (this.closed) return;
    if (this.failing && nowMs < this.failing.nextTry) {
      this.dropRows();
      return;
    }
    const rows = this.rows;
    try {
      this.db.transaction(() => {
        if (this.failing && this.run) {
          const f = this.failing;
          this.stmt.unstored.run(
            this.run.id,
            f.firstSample,
            f.lastSample,
            new Date(this.wallMsAt(f.firstSample)).toISOString(),
            new Date(this.wallMsAt(f.lastSample)).toISOString(),
            f.reason,
          );
        }
        const run = this.run?.id ?? 0;
        for (let i = 0; i < rows.length; i++) {
          this.insertRow[LEVELS[rows.level[i]]].run(
            rows.series[i],
            run,
            rows.k[i],
            rows.n[i],
            rows.power[i],
            rows.min[i],
            rows.max[i],
          );
        }
        for (const op of this.ops) this.stmt[op.sql].run(...op.args);
        this.writeHealth();
      })();
    } catch (err) {
      if (!isStorageFault(err)) throw err;
      const reason = `${(err as { code?: string }).code}: ${(err as Error).message}`;
      if (!this.failing) {
        this.options.warn(
          `history is not being kept: the store refuses writes (${reason}). Analysis and alarms go on; retrying every ${Math.round(this.retryMs / 1000)} s, and the span not stored will be recorded.`,
        );
        this.failing = {
          since: nowMs,
          firstSample: rows.firstSample,
          lastSample: rows.lastSample,
          reason,
          nextTry: nowMs + this.retryMs,
        };
      } else this.failing.nextTry = nowMs + this.retryMs;
      this.dropRows();
      return;
    }
    if (this.failing) {
      this.options.warn(
        `history is kept again; samples ${this.failing.firstSample}…${this.failing.lastSample} were not stored (recorded in the unstored table).`,
      );
      this.failing = undefined;
    }
    if (rows.length && this.run) this.latestWallMs = Math.max(this.latestWallMs, this.wallMsAt(rows.lastSample));
    rows.clear();
    this.ops.length = 0;
    this.flushes++;
    this.lastCommitMs = performance.now();
    this.lastCommitWallMs = Date.now();
    if (nowMs - this.lastRetentionMs > 60_000) {
      this.lastRetentionMs = nowMs;
      this.applyRetention();
    }
  }

  /** The run's counts so far, as the latest reading of the minute the newest sample falls in. */
  private writeHealth(): void {
    const now = this.options.health?.();
    const run = this.run;
    if (!now || !run || now.lastSample < run.firstSample) return;
    const counts = countsSince(now, this.healthBase);
    const k = Math.floor(now.lastSample / run.levelSamples['1m']);
    this.stmt.health.run(run.id, k, now.lastSample, ...HEALTH_FIELDS.map(([f]) => counts[f]));
  }

  private dropRows(): void {
    const f = this.failing!;
    const rows = this.rows;
    if (rows.length) {
      if (rows.firstSample < f.firstSample) f.firstSample = rows.firstSample;
      if (rows.lastSample > f.lastSample) f.lastSample = rows.lastSample;
    }
    rows.clear();
  }

  /** Deletes rows older than each level's retention, counted back from the newest stored wall time. */
  applyRetention(): void {
    if (!this.latestWallMs) return;
    const runs = this.stmt.runs.all() as {
      id: number;
      sample_rate: number;
      first_sample: number;
      start_wall_ms: number;
      level_samples: string;
    }[];
    const series = (this.stmt.seriesIds.all() as { id: number }[]).map((s) => s.id);
    try {
      this.db.transaction(() => {
        for (const l of LEVELS) {
          const cutoffMs = this.latestWallMs - this.retention[l] * 1000;
          const prune = this.stmt.prune(l);
          for (const r of runs) {
            const len = (JSON.parse(r.level_samples) as Record<Level, number>)[l];
            const sample = r.first_sample + ((cutoffMs - r.start_wall_ms) / 1000) * r.sample_rate;
            const k = Math.floor(sample / len);
            if (k <= 0) continue;
            if (l === 'snap') this.stmt.pruneSnap.run(r.id, k);
            else for (const s of series) prune.run(s, r.id, k);
          }
        }
        this.stmt.pruneSpectra.run(this.latestWallMs - (this.retention.spectra ?? SPECTRA_RETENTION_SECONDS) * 1000);
      })();
    } catch (err) {
      if (!isStorageFault(err)) throw err;
    }
  }

  /**
   * After a crash the open 1 min and 1 h intervals of the last run were never written: rebuild every coarse row
   * missing after a run's last one from the finer level (n-weighted mean power, min of min, max of max).
   */
  private repairRollups(): void {
    const runs = this.stmt.runs.all() as { id: number }[];
    this.db.transaction(() => {
      for (const [coarse, fine] of [
        ['1m', '1s'],
        ['1h', '1m'],
      ] as const) {
        const rebuild = this.db.prepare(
          `INSERT OR IGNORE INTO trend_${coarse} (series, run, k, n, power, min, max)
           SELECT series, run, k / 60, sum(n), sum(n * power) / sum(n), min(min), max(max)
           FROM trend_${fine} WHERE run = ? AND k >= ? GROUP BY series, k / 60`,
        );
        for (const r of runs) {
          const last = (this.stmt.maxK(coarse).get(r.id) as { k: number | null }).k;
          rebuild.run(r.id, last === null ? 0 : (last + 1) * 60);
        }
      }
    })();
  }

  close(): void {
    if (this.closed) return;
    this.flush(Infinity);
    this.closed = true;
  }
}
