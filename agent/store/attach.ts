// The adapter that hangs the history store on a running monitor: takes the store's lock, opens and checks the
// file, observes segments, snapshots and events as one monitor part (behind the part boundary), and commits twice
// a second. One call, one close; closing detaches the part.
import { mkdirSync } from 'node:fs';
import { dirname } from 'node:path';
import type { Pipeline } from '../pipeline/pipeline.ts';
import type { MonitorPart, PartSink } from '../monitor/parts.ts';
import type { DetectorStatus } from '../rules/detectors.ts';
import type { FloorlineEvent } from '../../protocol/events.ts';
import { lockStore, type StoreLock } from './store-lock.ts';
import { openStoreForWriting, type StoreDb } from './open-store.ts';
import { HistoryWriter } from './history-writer.ts';
import { TrendSampler } from './trend-sampler.ts';
import { SpectrumSampler } from './spectrum-sampler.ts';
import { IncidentBook, type AlarmEventLike, type IncidentRecord } from './incident-book.ts';
import type { Retention } from './levels.ts';
import type { RunContext } from './run-context.ts';
import type { HealthCounters } from './health.ts';
import { CommitWatchdog } from './commit-watchdog.ts';
import type { StoreStatus } from '../../protocol/messages.ts';

export interface HistoryOptions {
  /** The store file (DATA/floorline.sqlite for a live run). */
  path: string;
  command: string;
  /** What feeds the pipeline (port path or recording), kept with each run. */
  source: string;
  bands?: readonly { low: number; high: number }[];
  retention?: Retention;
  detectorStatus?: () => readonly DetectorStatus[] | undefined;
  /** The run's baseline, config and channels, stored with each run for reports. */
  context?: () => RunContext | undefined;
  /** The detectors' own incident records (grouping, acknowledge state); absent: incidents are built from events. */
  incidentRecords?: () => readonly IncidentRecord[] | undefined;
  /** Tells the detectors of a note on an incident (so their listing shows it too). */
  onIncidentNote?: (incident: string, text: string, sample: number) => void;
  warn: (message: string) => void;
  /** The agent's health counters since the process began (kept per run, table `health`). */
  health?: () => HealthCounters;
  /** Wall ms between commits (default 500; at most 1000 keeps kill -9 losses within a second). */
  commitMs?: number;
  /** Wall ms without a commit while rows wait before the store is called stalled (default 10 s). */
  stallMs?: number;
  /** Told when the store stalls (`true`) and when it commits again (`false`); default: warn. */
  onStall?: (detail: string, stalled: boolean) => void;
}

export interface History {
  path: string;
  writer: HistoryWriter;
  /** Adds an operator note at the pipeline's current sample: into the event stream (so the event log) and the store. */
  note(text: string, incident?: string): { sample: number; t: number; wallTime: string };
  /** The run compares against another baseline (or none) from the next sample on. */
  baselineChanged(baseline: RunContext['baseline']): void;
  /** File, last commit, rows waiting and commit stalls (for status). */
  status(): StoreStatus;
  close(): void;
}

/** Opens the store and attaches it as a part; throws StoreLockedError when another live agent holds it. */
export function attachHistory(pipeline: Pipeline, parts: PartSink, o: HistoryOptions): History {
  mkdirSync(dirname(o.path), { recursive: true });
  const lock: StoreLock = lockStore(o.path, o.command);
  let db: StoreDb;
  try {
    db = openStoreForWriting(o.path, o.warn);
  } catch (err) {
    lock.release();
    throw err;
  }
  const writer = new HistoryWriter(db, { warn: o.warn, retention: o.retention, health: o.health });
  const sampler = new TrendSampler(writer, {
    command: o.command,
    source: o.source,
    bands: o.bands,
    detectorStatus: o.detectorStatus,
    context: o.context,
    wallMsAt: (sample) => Date.parse(pipeline.wallTimeAt(sample)),
  });
  const spectra = new SpectrumSampler(writer);
  const book = new IncidentBook();
  const part: MonitorPart = {
    name: 'history store',
    onAnalysis: (grid) => sampler.onAnalysis(grid),
    onSegment: (channel, density, lastSample) => sampler.onSegment(channel, density, lastSample),
    onSnapshot: (s) => {
      sampler.onSnapshot(s);
      spectra.onSnapshot(s);
    },
    onEvent: (e) => {
      writer.event(e, JSON.stringify(e));
      const ev = e as unknown as AlarmEventLike & { text?: string };
      if ((ev.kind as string) === 'note' && typeof ev.text === 'string') {
        writer.note({ sample: ev.sample, t: ev.t, wallTime: ev.wallTime, text: ev.text, incident: ev.incident });
      }
      const inc = book.apply(ev);
      if (inc && !o.incidentRecords?.()) writer.incident(inc);
    },
    onEnd: () => sampler.finish(),
  };
  const detach = parts.attach(part);
  // The detectors' records, when there are any, are the incidents: changed ones are written with each commit.
  const written = new Map<string, string>();
  const syncIncidents = (): void => {
    const records = o.incidentRecords?.() ?? [];
    // The detectors keep a bounded list; forget what they forgot, so this map stays bounded too.
    if (written.size > 2 * records.length + 100) {
      const live = new Set(records.map((r) => r.id));
      for (const id of written.keys()) if (!live.has(id)) written.delete(id);
    }
    for (const r of records) {
      const { notes: _notes, ...rest } = r as IncidentRecord & { notes?: unknown };
      // An open incident has no peak in the detectors' record yet: the one its events show so far stands in.
      if (!rest.peak) rest.peak = book.peakOf(r.id);
      const key = JSON.stringify(rest);
      if (written.get(r.id) === key) continue;
      written.set(r.id, key);
      writer.incident(rest as IncidentRecord);
    }
  };
  const timer = setInterval(
    () =>
      parts.guard(part, 'commit', () => {
        syncIncidents();
        writer.flush();
      }),
    Math.min(1000, o.commitMs ?? 500),
  );
  timer.unref();
  // Watched on the pipeline's own block events, not through the part: a part cut off after an error gets none.
  const watchdog = new CommitWatchdog(writer, {
    file: o.path,
    stallMs: o.stallMs,
    report: o.onStall ?? ((detail, stalled) => stalled && o.warn(detail)),
  });
  const unwatch = pipeline.on('block', () => watchdog.check());
  let closed = false;
  return {
    path: o.path,
    writer,
    note(text, incident) {
      const sample = Math.max(0, pipeline.counters().lastSample);
      const rate = pipeline.stream?.sampleRate ?? 1;
      const e = {
        kind: 'note',
        text,
        sample,
        t: sample / rate,
        wallTime: pipeline.wallTimeAt(sample),
        ...(incident ? { incident } : {}),
      };
      if (incident) o.onIncidentNote?.(incident, text, sample);
      pipeline.emitEvent(e as unknown as FloorlineEvent);
      return e;
    },
    baselineChanged(baseline) {
      writer.baselineChange(Math.max(0, pipeline.counters().lastSample + 1), baseline);
    },
    status: () => watchdog.status(),
    close() {
      if (closed) return;
      closed = true;
      clearInterval(timer);
      unwatch();
      detach();
      try {
        syncIncidents();
        sampler.finish();
        writer.close();
      } catch (err) {
        // The last commit failed (not a storage fault, which the writer tells itself): say so, and still release
        // the file and its lock so a restart can open it.
        o.warn(
          `history store ${o.path}: the last commit at close failed (${(err as Error).message}); ${writer.pending} rows not stored`,
        );
      } finally {
        db.close();
        lock.release();
      }
    },
  };
}
