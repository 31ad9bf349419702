// The run/replay/demo session: one pipeline, one source, and what hangs off it — recorder (continuous and event
// captures), detectors, event log, terminal report, dashboard server. Stops cleanly on SIGINT/SIGTERM.
import type { FloorlineEvent } from '../../../protocol/events.ts';
import type { Source } from '../../../protocol/stream.ts';
import { dataFolderAt, ensureDataFolder, type DataFolder } from '../../config/data-folder.ts';
import type { Pipeline } from '../../pipeline/pipeline.ts';
import type { Detector } from '../../pipeline/types.ts';
import { SnapshotDigest } from '../../pipeline/snapshot-digest.ts';
import { Recorder, type RecorderOptions } from '../../recorder/recorder.ts';
import { repairRecordings } from '../../recorder/repair-on-start.ts';
import { EventLog } from '../../events/event-log.ts';
import type { SinkConfig } from '../../config/rig-config.ts';
import { attachNotifier } from '../../notify/attach.ts';
import { installShutdown } from '../../service/shutdown.ts';
import { registerSecret } from '../../service/log-lines.ts';
import { attachRetention } from '../../retention/attach.ts';
import type { RetentionKeeper, RetentionPolicy } from '../../retention/retention.ts';
import { describeEvent, printStatusLine, printStreamHeader, printSummary } from './console-report.ts';
import { attachHistory, type History } from '../../store/attach.ts';
import { AlarmHook } from '../../rules/alarm-hook.ts';
import type { Level } from '../../store/schema.ts';

export interface SessionOptions {
  command: string;
  pipeline: Pipeline;
  source: Source;
  dataDir: string;
  /** Record continuously from the start. */
  record: boolean;
  recorder?: RecorderOptions;
  /** Wall seconds between status lines on stdout; 0 = none. */
  statusEvery: number;
  quiet: boolean;
  /** Frames in the file, for a replay's header. */
  frames?: () => number | undefined;
  /** Builds the detectors once the recorder exists (so alarms can ask it for captures). */
  detectors?: (recorder: Recorder | undefined, folder: DataFolder) => Detector[];
  /** Also append every event to this file (besides the data folder's events.jsonl). */
  eventsOut?: string;
  /** Starts the dashboard server when given; returns its URL and a close function. */
  /** Disk retention of the rig config (quotas, free-space floor). */
  retention?: RetentionPolicy;
  /** Notification sinks of the rig config (their outbox lives in the data folder). */
  notify?: readonly SinkConfig[];
  serve?: (ctx: { folder: DataFolder; recorder: Recorder | undefined; history: History | undefined; retention?: RetentionKeeper }) => Promise<{ url: string; close(): Promise<void> }>;
  /** Keep the trend history in this store file (see agent/store); absent: no history. */
  history?: { path: string; source: string; bands?: readonly { low: number; high: number }[]; retention?: Record<Level, number> };
}

export interface Session {
  folder: DataFolder;
  /** Disk retention, when the rig config sets one. */
  retention?: RetentionKeeper;
  recorder: Recorder | undefined;
  history: History | undefined;
  digest: SnapshotDigest;
  /** Resolves when the source ended (or was stopped) and everything is flushed. */
  finished: Promise<void>;
  stop(): Promise<void>;
}

/** Prepares the data folder and recorder, subscribes the report, starts server and source. */
export async function startSession(o: SessionOptions): Promise<Session> {
  const { pipeline, source } = o;
  registerSecret(process.env.FLOORLINE_TOKEN);
  for (const s of o.notify ?? []) if ('headers' in s) for (const v of Object.values(s.headers ?? {})) registerSecret(v);
  const folder = dataFolderAt(o.dataDir);
  let recorder: Recorder | undefined;
  let folderOk = false;
  const needsFolder = o.record || o.serve !== undefined || o.detectors !== undefined;
  if (needsFolder) {
    try {
      ensureDataFolder(folder);
      const repair = await repairRecordings(folder);
      for (const r of repair.repaired) process.stderr.write(`floorline ${o.command}: repaired ${r.file} left by a crash (${r.frames} frames kept)\n`);
      for (const f of repair.failed) process.stderr.write(`floorline ${o.command}: could not repair ${f.file}: ${f.error}\n`);
      folderOk = true;
      recorder = new Recorder(folder, o.recorder);
      recorder.attach(pipeline);
    } catch (err) {
      // No writable data folder: analysis still runs; recording and captures are off and say why.
      process.stderr.write(`floorline ${o.command}: ${(err as Error).message}; recording is off, analysis goes on.\n`);
    }
  }
  if (o.record && recorder) recorder.startRecording();
  else if (o.record) process.stderr.write(`floorline ${o.command}: recording failed: no usable data folder at ${folder.root}.\n`);
  const installed = o.detectors?.(recorder, folder) ?? [];
  for (const d of installed) pipeline.addDetector(d);
  const hook = installed.find((d): d is AlarmHook => d instanceof AlarmHook);
  // Refused (another agent holds the store) before the source starts: nothing is read, nothing is written.
  const history = o.history
    ? attachHistory(pipeline, {
        ...o.history,
        command: o.command,
        detectorStatus: () => hook?.detectors?.status(),
        incidentRecords: () => hook?.detectors?.incidentRecords(),
        onIncidentNote: (id, text, sample) => void hook?.detectors?.noteIncident(id, text, sample),
        warn: (m) => process.stderr.write(`floorline ${o.command}: ${m}\n`),
      })
    : undefined;
  if (history && !o.quiet) process.stdout.write(`history    ${history.path}\n`);

  const logPaths = [...(folderOk && o.detectors ? [folder.events] : []), ...(o.eventsOut ? [o.eventsOut] : [])];
  const log = logPaths.length ? new EventLog(logPaths) : undefined;
  const notifier = folderOk && o.notify?.length
    ? attachNotifier(pipeline, folder.root, o.notify, (line) => process.stderr.write(`floorline ${o.command}: ${line}\n`))
    : undefined;
  if (o.notify?.length && !notifier) process.stderr.write(`floorline ${o.command}: notifications are off: no usable data folder for their outbox.\n`);
  let retention: RetentionKeeper | undefined;
  if (recorder && o.retention) retention = attachRetention(pipeline, recorder, folder.recordings, o.retention, () => o.record);
  const digest = new SnapshotDigest();
  pipeline.on('snapshot', (s) => digest.add(s));
  pipeline.on('event', (e: FloorlineEvent) => {
    log?.write(e);
    if (!o.quiet) process.stdout.write(describeEvent(e) + '\n');
  });
  pipeline.on('info', (info) => {
    if (!o.quiet) printStreamHeader(info, pipeline, o.frames?.());
  });

  const server = o.serve ? await o.serve({ folder, recorder, history, retention }) : undefined;
  if (server) process.stdout.write(`dashboard  ${server.url}\n`);

  const wall0 = performance.now();
  await pipeline.attach(source);
  const timer = o.statusEvery > 0 ? setInterval(() => printStatusLine(pipeline, recorder), o.statusEvery * 1000) : undefined;
  let stopping: Promise<void> | undefined;
  const stop = (): Promise<void> => (stopping ??= source.stop());
  const signals = installShutdown(stop, (line) => process.stderr.write(`floorline ${o.command}: ${line}\n`));
  const finished = (async () => {
    try {
      await pipeline.whenEnded();
    } finally {
      if (timer) clearInterval(timer);
      signals.uninstall();
      retention?.stop();
      recorder?.close();
      await notifier?.close();
      history?.close();
      log?.close();
      await server?.close();
    }
    printSummary(pipeline, performance.now() - wall0, digest, recorder);
  })();
  return { folder, recorder, history, retention, digest, finished, stop };
}
