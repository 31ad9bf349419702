// One running monitor: source → pipeline → detectors, with the recorder, event log, event history, alarm table,
// current baseline and the live low-frequency view, plus any attached parts. run, replay and demo all start one
// through startMonitor; the dashboard server reads it through the read model below and keeps no state of its own.
import { mkdirSync, existsSync } from 'node:fs';
import { resolve as resolvePath } from 'node:path';
import { shownPath } from '../config/shown-path.ts';
import { writeFile } from 'node:fs/promises';
import type { FloorlineEvent } from '../../protocol/events.ts';
import { alarmId, bandId } from '../../protocol/ids.ts';
import type { AgentStatus, AlarmRow, BandRow, RecordingState, ReplayState } from '../../protocol/messages.ts';
import type { AnalysisSettings, AveragingSpec } from '../../protocol/settings.ts';
import type { Source, StreamInfo } from '../../protocol/stream.ts';
import { captureLive, type LiveCapture } from '../baseline/live-capture.ts';
import type { BaselineFile } from '../baseline/format.ts';
import { dataFolderAt, ensureDataFolder, type DataFolder } from '../config/data-folder.ts';
import { EventLog } from '../events/event-log.ts';
import { chooseLowFrequencyView } from '../lowfreq/choose-view.ts';
import type { LowFrequencyView } from '../lowfreq/view.ts';
import { Pipeline } from '../pipeline/pipeline.ts';
import { SnapshotDigest } from '../pipeline/snapshot-digest.ts';
import type { SpectrumSnapshot } from '../pipeline/types.ts';
import { Recorder, type RecordingStatus } from '../recorder/recorder.ts';
import { repairRecordings } from '../recorder/repair-on-start.ts';
import { AlarmHook } from '../rules/alarm-hook.ts';
import type { DetectorStatus } from '../rules/detectors.ts';
import { makeEvent } from '../rules/event-factory.ts';
import { ReplaySource } from '../sources/replay.ts';
import { attachHistory, type History } from '../store/attach.ts';
import type { HealthCounters } from '../store/health.ts';
import { fileSha256, type RunContext } from '../store/run-context.ts';
import { isDiskFault } from '../store/disk-fault.ts';
import { attachNotifier } from '../notify/attach.ts';
import type { Notifier } from '../notify/notifier.ts';
import { attachRetention } from '../retention/attach.ts';
import type { RetentionKeeper } from '../retention/retention.ts';
import { HealthWatch, type HealthVerdict } from '../service/health.ts';
import { registerSecret } from '../service/log-lines.ts';
import { installShutdown } from '../service/shutdown.ts';
import { installReload } from '../service/reload.ts';
import { AlarmTable } from './alarm-table.ts';
import { BandTable } from './band-table.ts';
import { EventHistory } from './event-history.ts';
import type { MonitorOptions } from './options.ts';
import { PartHost, type MonitorPart, type PartSink } from './parts.ts';
import { MonitorRefusal } from './refusal.ts';

/** The current baseline as the read model hands it out: built once per baseline, shared, never copied per call. */
export interface BaselineView {
  file: string;
  hash: string;
  settings: AnalysisSettings;
  channels: readonly { name: string; psd: Float64Array; equivalentAverages: number }[];
}

/** The status the monitor owns; the server adds protocol, clients, mainsHz and wallTime to make an AgentStatus. */
export type MonitorStatus = Omit<AgentStatus, 'protocol' | 'clients' | 'wallTime' | 'mainsHz'>;

function recordingState(s: RecordingStatus): RecordingState {
  return { state: s.state, ...(s.file ? { file: s.file } : {}), ...(s.error ? { error: s.error } : {}) };
}

function baselineView(file: string, b: BaselineFile): BaselineView {
  return {
    file,
    hash: b.settingsHash,
    settings: b.settings,
    channels: b.channels.map((c) => ({
      name: c.name,
      psd: Float64Array.from(c.psd),
      equivalentAverages: c.equivalentAverages,
    })),
  };
}

export class Monitor implements PartSink {
  readonly pipeline: Pipeline;
  readonly folder: DataFolder;
  readonly digest = new SnapshotDigest();
  readonly lowFrequency: LowFrequencyView | undefined;
  /** Resolves when the source ended (or was stopped) and every part is closed. */
  finished: Promise<void> = Promise.resolve();
  private recorderRef: Recorder | undefined;
  private log: EventLog | undefined;
  private historyRef: History | undefined;
  private notifier: Notifier | undefined;
  private retention: RetentionKeeper | undefined;
  private readonly healthWatch: HealthWatch;
  private readonly hook: AlarmHook;
  private readonly parts: PartHost;
  private readonly recent: EventHistory;
  private readonly alarmTable = new AlarmTable();
  private readonly bandTable = new BandTable();
  private last: SpectrumSnapshot | null = null;
  private baselineNow: BaselineView | null;
  /** The baseline file on disk (for the history store's run context). */
  private baselinePath: string | undefined;
  /** The file behind baselineNow, and the baseline before it (one is kept, for restore-baseline). */
  private baselineData: BaselineFile | null;
  private baselinePrevious: { view: BaselineView; data: BaselineFile; path: string | undefined } | null = null;
  private capturing: { file: string; run: LiveCapture } | null = null;
  private stopping: Promise<void> | undefined;
  private segmentsObserved = false;
  private readonly say: (line: string) => void;

  constructor(
    readonly source: Source,
    private readonly o: MonitorOptions,
  ) {
    this.say = o.log ?? ((line) => process.stderr.write(`floorline ${o.command}: ${line}\n`));
    this.pipeline = new Pipeline({
      analysis: o.analysis,
      averaging: o.averaging,
      snapshotRate: o.snapshotRate,
      mode: o.mode,
      queueCapacity: o.queueCapacity,
      coherence: o.rules.coherent.pairs ?? 'auto',
      threads: o.threads,
    });
    this.folder = dataFolderAt(o.dataDir);
    this.recent = new EventHistory(o.eventHistory ?? 1000);
    this.baselineNow = o.baseline ? baselineView(o.baseline.label ?? o.baseline.where, o.baseline.baseline) : null;
    this.baselinePath = o.baseline ? resolvePath(o.baseline.where) : undefined;
    this.baselineData = o.baseline?.baseline ?? null;
    this.parts = new PartHost((part, where, err) => this.partFailed(part, where, err));
    this.hook = new AlarmHook({
      baseline: o.baseline?.baseline,
      baselineWhere: o.baseline?.where,
      rules: o.rules,
      masks: o.masks,
      capture: (sample, label) => this.recorderRef?.capture(sample, label).file || undefined, // '' = refused (quota)
    });
    this.healthWatch = new HealthWatch(this.pipeline);
    this.lowFrequency =
      o.lowFrequency === false
        ? undefined
        : chooseLowFrequencyView({
            threads: o.threads ?? 1,
            mode: o.mode,
            view: typeof o.lowFrequency === 'object' ? o.lowFrequency : undefined,
            onFailure: (message) => this.internalFault(message),
          });
  }

  get recorder(): Recorder | undefined {
    return this.recorderRef;
  }

  /** The history store the monitor writes, when it keeps one. */
  get history(): History | undefined {
    return this.historyRef;
  }

  /**
   * Attaches a part; from the next callback on it sees the stream (attach before the source starts to see all).
   * The function returned detaches it. Welch segments are observed only once a part asks for them.
   */
  attach(part: MonitorPart): () => void {
    const detach = this.parts.attach(part);
    if (part.onSegment && !this.segmentsObserved) {
      this.segmentsObserved = true;
      this.pipeline.addSegmentObserver({
        onAnalysis: (grid) => this.parts.call('onAnalysis', grid),
        onSegment: (channel, density, lastSample) => this.parts.call('onSegment', channel, density, lastSample),
      });
    }
    return detach;
  }

  guard(part: MonitorPart, where: string, work: () => void): void {
    this.parts.guard(part, where, work);
  }

  /** Data folder, crash repair, recorder, event log; then the wiring. Called by startMonitor. */
  async prepare(): Promise<void> {
    const o = this.o;
    const p = this.pipeline;
    // Values that must never reach a log line.
    registerSecret(process.env.FLOORLINE_TOKEN);
    for (const s of o.notify ?? [])
      if ('headers' in s) for (const v of Object.values(s.headers ?? {})) registerSecret(v);
    let folderOk = false;
    try {
      ensureDataFolder(this.folder);
      const repair = await repairRecordings(this.folder);
      for (const r of repair.repaired) this.say(`repaired ${r.file} left by a crash (${r.frames} frames kept)`);
      for (const f of repair.failed) this.say(`could not repair ${f.file}: ${f.error}`);
      folderOk = true;
      this.recorderRef = new Recorder(this.folder, o.recorder);
      this.recorderRef.attach(p);
    } catch (err) {
      // No writable data folder: analysis still runs; recording and captures are off and say why.
      this.say(`${(err as Error).message}; recording is off, analysis goes on.`);
    }
    if (o.record && this.recorderRef) this.recorderRef.startRecording();
    else if (o.record) this.say(`recording failed: no usable data folder at ${this.folder.root}.`);
    p.addDetector(this.hook);
    const hook = this.hook;
    // Refused (another agent holds the store) before the source starts: nothing is read, nothing is written.
    if (o.history) {
      try {
        this.historyRef = attachHistory(p, this, {
          ...o.history,
          command: o.command,
          detectorStatus: () => hook.detectors?.status(),
          context: () => this.runContext(),
          incidentRecords: () => hook.incidentRecords(),
          health: () => this.healthCounters(),
          onIncidentNote: (id, text, sample) => void hook.detectors?.noteIncident(id, text, sample),
          warn: (m) => this.say(m),
          onStall: (detail, stalled) => this.internalFault(detail, true, stalled ? 'raised' : 'cleared'),
        });
      } catch (err) {
        // A full or read-only disk must not stop the monitor: analysis and alarms go on without history, said
        // once. A store held by another agent, or a foreign or corrupt file, is still refused (thrown on).
        if (!isDiskFault(err)) throw err;
        this.say(
          `history is not being kept: ${(err as Error).message} (${o.history.path}); free space or fix the folder, then restart`,
        );
      }
    }
    const logPaths = [...(folderOk ? [this.folder.events] : []), ...(o.eventsOut ? [o.eventsOut] : [])];
    this.log = logPaths.length ? new EventLog(logPaths) : undefined;
    if (this.recorderRef && o.retention) {
      this.retention = attachRetention(p, this, this.recorderRef, this.folder.recordings, o.retention, () => o.record);
    }
    if (o.notify?.length) {
      if (folderOk) this.notifier = attachNotifier(p, this, this.folder.root, o.notify, this.say);
      else this.say('notifications are off: no usable data folder for their outbox.');
    }
    this.lowFrequency?.attach(p);

    p.on('info', (i) => this.parts.call('onInfo', i));
    p.on('block', (b) => this.parts.call('onBlock', b));
    p.on('gap', (g) => this.parts.call('onGap', g));
    p.on('end', (e) => this.parts.call('onEnd', e));
    p.on('snapshot', (s) => {
      this.last = s;
      this.digest.add(s);
      this.parts.call('onSnapshot', s);
    });
    p.on('event', (e: FloorlineEvent) => {
      this.log?.write(e);
      this.recent.add(e);
      this.alarmTable.onEvent(e);
      this.parts.call('onEvent', e);
    });
    const duration = o.durationSeconds;
    if (duration !== undefined) {
      // Stop after this much sample time (the wall clock plays no part).
      p.on('block', (b) => {
        const info = p.stream;
        if (info && b.firstSample + b.frames >= info.firstSample + duration * info.sampleRate) void this.stop();
      });
    }
  }

  /** Starts the source; `finished` then resolves once it has ended and everything is flushed and closed. */
  async start(): Promise<void> {
    await this.pipeline.attach(this.source);
    const signals = installShutdown(() => this.stop(), this.say);
    const uninstallReload = this.o.rig
      ? installReload(
          this.o.rig,
          {
            setNotifyFilters: (sinks) => this.notifier?.setFilters(sinks),
            setRetention: (r) => this.retention?.setPolicy(r),
          },
          this.say,
        )
      : undefined;
    this.finished = (async () => {
      try {
        await this.pipeline.whenEnded();
      } finally {
        signals.uninstall();
        uninstallReload?.();
        await this.close();
      }
    })();
  }

  stop(): Promise<void> {
    this.pipeline.sourceStopping();
    return (this.stopping ??= this.source.stop());
  }

  /** Releases what prepare() opened (also when startup failed half-way). */
  async close(): Promise<void> {
    // The view's workers deliver their last frames to the parts before those close.
    await this.lowFrequency?.close();
    this.capturing?.run.cancel();
    this.retention?.stop();
    this.recorderRef?.close();
    await this.notifier?.close();
    this.notifier = undefined;
    this.historyRef?.close();
    this.historyRef = undefined;
    this.log?.close();
    this.log = undefined;
    await this.parts.closeAll();
  }

  // ---------------------------------------------------------------- read model

  streamInfo(): StreamInfo | null {
    return this.pipeline.stream ?? null;
  }

  latestSnapshot(): SpectrumSnapshot | null {
    return this.last;
  }

  /** The baseline compared against now (one captured live replaces the starting one). Shared object: do not modify. */
  baseline(): BaselineView | null {
    return this.baselineNow;
  }

  recentEvents(limit: number): FloorlineEvent[] {
    return this.recent.recent(limit);
  }

  /** Mains fundamental, Hz: the rules' measurement, else the newest mains event's frequency over its harmonic. */
  /** The limit rule's masks by channel name ('*' = every channel), as given. */
  limitMasks(): MonitorOptions['masks'] {
    return this.o.masks;
  }

  mainsHz(): number | null {
    const measured = this.hook.detectors?.status().find((c) => c.mains.fundamental > 0)?.mains.fundamental;
    if (measured) return measured;
    const e = this.recent.findLast((x) => x.rule === 'mains' && x.frequency !== undefined && !!x.harmonic);
    return e ? e.frequency! / e.harmonic! : null;
  }

  /** The alarm rules' latest readings per channel (band levels against thresholds, mains, tracked lines). */
  readings(): readonly DetectorStatus[] {
    return this.hook.detectors?.status() ?? [];
  }

  bands(): BandRow[] {
    const d = this.hook.detectors;
    return this.bandTable.rows({
      snapshot: this.last,
      baseline: this.baselineNow ?? undefined,
      rules: d?.status(),
      bandsOf: (channel) => d?.bandsOf(channel) ?? [],
      raised: (channel, low, high) =>
        this.alarmTable.get(alarmId({ rule: 'band-rise', channel, band: [low, high] }))?.state === 'raised',
    });
  }

  alarms(): AlarmRow[] {
    return this.alarmTable.all();
  }

  replayState(): ReplayState | null {
    const r = this.o.replay ?? this.source;
    if (!(r instanceof ReplaySource)) return null;
    const frames = r.fileInfo?.frames ?? 0;
    return {
      position: frames ? r.position.sample % frames : r.position.sample,
      duration: frames,
      speed: r.speed,
      loop: r.loops,
      file: shownPath(r.path),
    };
  }

  /** The counters the history store keeps per run for the report's Health section (the same as /metrics). */
  healthCounters(): HealthCounters {
    const c = this.pipeline.counters();
    const src = this.source.counters();
    return {
      lastSample: c.lastSample,
      samples: c.samples,
      gaps: c.gaps,
      lostSamples: c.lostSamples,
      crcErrors: src.crcErrors,
      syncErrors: src.syncErrors,
      nonfiniteFrames: c.nonfiniteFrames,
      droppedBlocks: c.droppedBlocks,
      droppedSamples: c.droppedSamples,
      clippedSamples: c.clippedSamples.reduce((a, n) => a + n, 0),
      deletedFiles: this.retention?.status().deletedFiles ?? 0,
    };
  }

  private coherenceRows(): { coherence?: MonitorStatus['coherence'] } {
    const rows = this.hook.detectors?.coherenceStatus() ?? [];
    return rows.length ? { coherence: rows } : {};
  }

  status(): MonitorStatus {
    const p = this.pipeline;
    const info = p.stream;
    const c = p.counters();
    const b = this.baselineNow;
    return {
      source: info ? info.source : null,
      sampleRate: info?.sampleRate ?? null,
      channels: info ? info.channels.map((x) => ({ name: x.name, unit: x.unit })) : [],
      samples: c.samples,
      t: info && c.lastSample >= 0 ? (c.lastSample + 1) / info.sampleRate : 0,
      gaps: c.gaps,
      lostSamples: c.lostSamples,
      crcErrors: this.source.counters().crcErrors,
      syncErrors: this.source.counters().syncErrors,
      nonfiniteFrames: c.nonfiniteFrames,
      droppedBlocks: c.droppedBlocks,
      recording: this.recorderRef ? recordingState(this.recorderRef.status()) : { state: 'off' },
      replay: this.replayState(),
      settings: p.analysisSettings ?? null,
      averaging: p.averaging,
      baseline: b ? { file: b.file, hash: b.hash } : null,
      previousBaseline: this.baselinePrevious
        ? { file: this.baselinePrevious.view.file, hash: this.baselinePrevious.view.hash }
        : null,
      spectrumSample: this.last?.sample ?? null,
      bands: this.bands(),
      alarms: this.alarms(),
      ...(this.lowFrequency ? { lowFrequency: this.lowFrequency.status() } : {}),
      ...this.coherenceRows(),
      ...(this.retention ? { disk: this.retention.status() } : {}),
      ...(this.historyRef ? { store: this.historyRef.status() } : {}),
    };
  }

  /**
   * Acknowledges the incident `id` names (all its alarms), or the alarm `id` names (and, for lines, the rule's
   * other lines on that channel): no re-alarm until it clears.
   */
  acknowledge(id: string): boolean {
    const incident = this.hook.detectors?.incidents.get(id);
    if (incident) {
      // An incident id: every alarm of the fault, and those that join it later (agent/rules/incidents.ts).
      const ok = this.hook.detectors!.acknowledgeIncident(id);
      let first: AlarmRow | undefined;
      for (const m of incident.members) {
        const row = m.open ? this.alarmTable.get(alarmId(m)) : undefined;
        if (row) this.alarmTable.markAcknowledged(row);
        first ??= row;
      }
      if (ok && first)
        this.operatorEvent(
          { ...first, incident: id },
          'acknowledged',
          `incident ${id} on ${first.channel} acknowledged by the operator`,
          { acknowledged: true },
        );
      return ok;
    }
    const { row, band } = this.resolve(id);
    // A line's id names that line: the others of its rule on the channel keep their own state.
    const n = this.hook.detectors?.acknowledge(row.rule, row.channel, band, row.frequency) ?? 0;
    if (n > 0) {
      this.alarmTable.markAcknowledged(row);
      this.operatorEvent(row, 'acknowledged', `${row.rule} on ${row.channel} acknowledged by the operator`, {
        acknowledged: true,
      });
    }
    return n > 0;
  }

  /** Silences the alarm `id` names until `untilSample` (sample time). */
  shelve(id: string, untilSample: number): boolean {
    if (!Number.isFinite(untilSample))
      throw new MonitorRefusal('bad-message', `shelve ${id}: until must be a sample index, got ${untilSample}`);
    const incident = this.hook.detectors?.incidents.get(id);
    if (incident) {
      const ok = this.hook.detectors!.shelveIncident(id, untilSample);
      const first = incident.members.map((m) => this.alarmTable.get(alarmId(m))).find((r) => r !== undefined);
      if (ok && first)
        this.operatorEvent(
          { ...first, incident: id },
          'shelved',
          `incident ${id} on ${first.channel} shelved by the operator until sample ${untilSample}`,
          { shelvedUntilSample: untilSample },
        );
      return ok;
    }
    const { row, band } = this.resolve(id);
    const n = this.hook.detectors?.shelve(row.rule, row.channel, untilSample, band, row.frequency) ?? 0;
    if (n > 0)
      this.operatorEvent(
        row,
        'shelved',
        `${row.rule} on ${row.channel} shelved by the operator until sample ${untilSample}`,
        { shelvedUntilSample: untilSample },
      );
    return n > 0;
  }

  /** What the history store keeps with each run besides its settings (agent/store/run-context.ts). */
  private runContext(): RunContext | undefined {
    const info = this.pipeline.stream;
    if (!info) return undefined;
    const b = this.baselineNow;
    return {
      dataDir: this.folder.root,
      ...(info.boardId !== undefined ? { boardId: info.boardId } : {}),
      ...(info.firmware !== undefined ? { firmware: info.firmware } : {}),
      channels: info.channels,
      averaging: this.pipeline.averaging,
      baseline:
        b && this.baselinePath
          ? { path: this.baselinePath, sha256: fileSha256(this.baselinePath), settingsHash: b.hash }
          : null,
      config: this.o.rig ? { path: resolvePath(this.o.rig.file), sha256: fileSha256(this.o.rig.file) } : null,
    };
  }

  /** Acknowledge and shelve go into the event log (and so the store and reports) as info events of the incident. */
  private operatorEvent(
    row: AlarmRow,
    state: 'acknowledged' | 'shelved',
    detail: string,
    extra: Record<string, unknown>,
  ): void {
    const sample = Math.max(0, this.pipeline.counters().lastSample);
    const rate = this.pipeline.stream?.sampleRate ?? 1;
    this.pipeline.emitEvent(
      makeEvent(
        row.rule,
        state,
        row.channel,
        sample,
        rate,
        this.pipeline.wallTimeAt(sample),
        detail,
        {
          ...(row.band ? { band: row.band } : {}),
          ...(row.incident ? { incident: row.incident } : {}),
          ...extra,
        } as Partial<FloorlineEvent>,
        'info',
      ),
    );
  }

  /** The row of an alarm id, and for band rules the band's exact edges as the rules hold them. */
  private resolve(id: string): { row: AlarmRow; band?: [number, number] } {
    const row = this.alarmTable.get(id);
    if (!row)
      throw new MonitorRefusal(
        'bad-message',
        `no alarm ${id} in this run; the alarm table (status.alarms) lists the ids`,
      );
    if (row.rule !== 'band-rise') return { row };
    const exact = this.hook.detectors
      ?.bandsOf(row.channel)
      .find((b) => bandId(row.channel, b.low, b.high) === id.slice('band-rise/'.length));
    return { row, band: exact ? [exact.low, exact.high] : row.band };
  }

  /**
   * Averages the next `seconds` of sample time into baselines/NAME (default baseline-SAMPLE.json) under the data
   * folder, then compares against it from the next snapshot on. Resolves with its path relative to the folder.
   */
  async captureBaseline(span: {
    seconds: number;
    name?: string;
    notes?: string;
    replace?: boolean;
  }): Promise<{ file: string }> {
    const p = this.pipeline;
    if (!p.stream || !p.analysisSettings)
      throw new MonitorRefusal('failed', 'no stream yet: wait for the first spectrum');
    if (this.capturing)
      throw new MonitorRefusal('failed', `a baseline capture into ${this.capturing.file} is still running`);
    const file = `baselines/${span.name ?? `baseline-${p.counters().lastSample + 1}.json`}`;
    const path = this.folder.resolve(file, 'baseline'); // a bad name is refused now, not after the span
    // A baseline is never overwritten by accident: replacing one takes an explicit request.
    if (!span.replace && existsSync(path))
      throw new MonitorRefusal(
        'exists',
        `${file} exists; choose another name, or send "replace": true to overwrite it`,
      );
    const run = captureLive(p, { seconds: span.seconds, notes: span.notes });
    this.capturing = { file, run };
    let result: BaselineFile;
    try {
      result = await run.result;
    } catch (err) {
      throw new MonitorRefusal('failed', (err as Error).message);
    } finally {
      this.capturing = null;
    }
    try {
      mkdirSync(this.folder.baselines, { recursive: true });
      await writeFile(path, JSON.stringify(result, null, 1) + '\n', { flag: span.replace ? 'w' : 'wx' });
    } catch (err) {
      throw new MonitorRefusal('failed', `cannot write ${file}: ${(err as Error).message}`);
    }
    this.hook.useBaseline(result, file);
    this.keepPrevious();
    this.baselineNow = baselineView(file, result);
    this.baselinePath = path;
    this.baselineData = result;
    this.historyRef?.baselineChanged(this.runContext()?.baseline ?? null);
    return { file };
  }

  private keepPrevious(): void {
    this.baselinePrevious =
      this.baselineNow && this.baselineData
        ? { view: this.baselineNow, data: this.baselineData, path: this.baselinePath }
        : null;
  }

  /**
   * Compares against the baseline before the current one again, from the next snapshot on; the current one
   * becomes the previous (so a restore can itself be undone). Refused when none is kept, or when it was taken
   * with other analysis settings than the running ones.
   */
  restoreBaseline(): { file: string; previous: string } {
    const prev = this.baselinePrevious;
    if (!prev)
      throw new MonitorRefusal(
        'failed',
        'no previous baseline: the agent keeps the one in use before the latest capture or restore, and there has been none',
      );
    try {
      this.hook.useBaseline(prev.data, prev.view.file);
    } catch (err) {
      throw new MonitorRefusal('failed', (err as Error).message);
    }
    const replaced = this.baselineNow?.file ?? '(none)';
    this.keepPrevious();
    this.baselineNow = prev.view;
    this.baselineData = prev.data;
    this.baselinePath = prev.path;
    this.historyRef?.baselineChanged(this.runContext()?.baseline ?? null);
    return { file: prev.view.file, previous: replaced };
  }

  async setRecording(on: boolean): Promise<RecordingState> {
    const r = this.recorderRef;
    if (!r)
      throw new MonitorRefusal(
        'unsupported',
        'no usable data folder (the agent said why when it started), so nothing can be recorded',
      );
    return recordingState(on ? r.startRecording() : r.stopRecording());
  }

  /** New analysis settings from the next block on; throws RangeError naming what is wrong. */
  setAnalysis(change: { averaging?: AveragingSpec; segment?: number; window?: string }): void {
    this.pipeline.configure({
      analysis: {
        ...(change.segment !== undefined ? { segment: change.segment } : {}),
        ...(change.window !== undefined ? { window: change.window } : {}),
      },
      averaging: change.averaging,
    });
    this.hook.settingsChangedLive();
  }

  /** Liveness (GET /healthz): samples arriving and analysis keeping up. */
  health(): HealthVerdict {
    return this.healthWatch.check();
  }

  /** Names of the parts still running (a failed part is left out). */
  partNames(): string[] {
    return this.parts.names;
  }

  private partFailed(part: MonitorPart, where: string, err: Error): void {
    const code = (err as Error & { code?: string }).code;
    const why = `${where}${code ? ` (${code})` : ''}`;
    this.say(`part ${part.name} failed in ${why} and is disabled (acquisition goes on): ${err.message}`);
    this.internalFault(`part ${part.name} failed in ${why} and was disabled: ${err.message}`, false);
  }

  /**
   * Something of the monitor's own stopped (or, `cleared`, works again): said on the log (unless already said) and
   * as an `internal` info event.
   */
  private internalFault(detail: string, say = true, state: 'raised' | 'cleared' = 'raised'): void {
    if (say) this.say(detail);
    const info = this.pipeline.stream;
    const sample = Math.max(0, this.pipeline.counters().lastSample);
    const rate = info?.sampleRate ?? 1;
    this.pipeline.emitEvent(
      makeEvent('internal', state, '*', sample, rate, this.pipeline.wallTimeAt(sample), detail, {}, 'info'),
    );
  }
}

/** Builds the monitor, attaches options.parts (in order, before the source starts), then starts the source. */
export async function startMonitor(source: Source, options: MonitorOptions): Promise<Monitor> {
  const m = new Monitor(source, options);
  await m.prepare();
  try {
    for (const spec of options.parts ?? []) m.attach(typeof spec === 'function' ? await spec(m) : spec);
    await m.start();
  } catch (err) {
    await m.close();
    throw err;
  }
  return m;
}
