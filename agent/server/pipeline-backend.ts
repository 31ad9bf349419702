// Adapts the agent's Pipeline (live, demo or replay) to ServerBackend. Parts another module owns are passed in
// as optional hooks (detectors' acknowledge, the recorder, the replay position, the current baseline), so the
// server works with whatever a command has wired and says "unsupported" for the rest.
import { writeFile } from 'node:fs/promises';
import { mkdirSync } from 'node:fs';
import type { FloorlineEvent } from '../../protocol/events.ts';
import { firstSettingMismatch } from '../../protocol/settings.ts';
import type { SourceCounters, StreamInfo } from '../../protocol/stream.ts';
import type { Pipeline } from '../pipeline/pipeline.ts';
import type { SpectrumSnapshot } from '../pipeline/types.ts';
import type { DataFolder } from '../config/data-folder.ts';
import type { AgentStatus, AlarmRow, DiskState, BandRow, RecordingState, ReplayState } from '../../protocol/messages.ts';
import { BaselineCapture } from '../baseline/capture.ts';
import type { BaselineFile } from '../baseline/format.ts';
import { defaultBands } from '../rules/default-bands.ts';
import type { DetectorStatus } from '../rules/detectors.ts';
import { bandBins } from '../../dsp/bands.ts';
import { windowMainLobeHalfWidth } from '../../dsp/windows.ts';
import type { LiveLowFrequency } from '../lowfreq/live-low-frequency.ts';
import type { LowFrequencyUpdate } from '../../protocol/low-frequency-messages.ts';
import { LatestPacer } from '../lowfreq/latest-pacer.ts';
import { BackendRefusal, type AlarmRef, type AnalysisChange, type BackendStatus, type BackendSubscriber, type BaselineOverlay, type HistoryAccess, type ServerBackend } from './backend.ts';

export interface RecorderHooks {
  start(): Promise<RecordingState>;
  stop(): Promise<RecordingState>;
  state(): RecordingState;
}

export interface PipelineBackendOptions {
  pipeline: Pipeline;
  data: DataFolder;
  /** The source's decoder counters (CRC errors); absent for sources without framing. */
  sourceCounters?: () => SourceCounters;
  replay?: () => ReplayState | null;
  /** The baseline the run started with (--baseline); one captured here takes its place. */
  baseline?: () => { file: string; baseline: BaselineFile } | null;
  /** Called with each baseline captured from the dashboard (e.g. to rebuild the detectors with it). */
  onBaselineCaptured?: (file: string, baseline: BaselineFile) => void;
  acknowledge?: (ref: AlarmRef) => boolean;
  recorder?: RecorderHooks;
  /** Bands per channel for the table (undefined: the alarm rules' default bands for the live settings). */
  bands?: (channel: string) => readonly { low: number; high: number }[] | undefined;
  mainsHz?: () => number | null;
  /** The alarm rules' latest readings (band level and threshold with lines masked out, alarm state). */
  detectorStatus?: () => readonly DetectorStatus[] | undefined;
  /** Events kept for clients that connect later. */
  eventHistory?: number;
  /** The live low-frequency view fed from the same pipeline (updates to clients at most 10 a second). */
  lowFrequency?: LiveLowFrequency;
  /** Liveness verdict for GET /healthz. */
  health?: () => { ok: boolean; reason: string };
  /** Disk accounting of the retention keeper, when there is one. */
  disk?: () => DiskState;
  /** The session's history store, when it keeps one. */
  history?: HistoryAccess;
}

const DB = (ratio: number): number => 10 * Math.log10(ratio);

/** Median of psd[first..last] (scratch is reused; the band floor is read from it). */
function median(psd: Float64Array, first: number, last: number, scratch: Float64Array): number {
  const n = last - first + 1;
  if (n <= 0) return NaN;
  const a = scratch.subarray(0, n);
  a.set(psd.subarray(first, last + 1));
  a.sort();
  return n % 2 ? a[(n - 1) >> 1] : 0.5 * (a[n / 2 - 1] + a[n / 2]);
}

export class PipelineBackend implements ServerBackend {
  readonly dataRoot: string;
  readonly history?: HistoryAccess;
  private readonly o: PipelineBackendOptions;
  private last: SpectrumSnapshot | null = null;
  private readonly events: FloorlineEvent[] = [];
  private readonly alarmRows = new Map<string, AlarmRow>();
  private captured: { file: string; baseline: BaselineFile } | null = null;
  private capture: { run: BaselineCapture; file: string; resolve(v: { file: string }): void; reject(e: Error): void } | null = null;
  private scratch = new Float64Array(0);
  private readonly subscribers = new Set<BackendSubscriber>();

  constructor(o: PipelineBackendOptions) {
    this.o = o;
    this.dataRoot = o.data.root;
    this.history = o.history;
    const p = o.pipeline;
    p.on('info', (i) => this.subscribers.forEach((s) => s.info(i)));
    p.on('snapshot', (s) => {
      this.last = s;
      this.subscribers.forEach((x) => x.snapshot(s));
    });
    p.on('block', (b) => {
      this.feedCapture(b);
      this.subscribers.forEach((s) => s.block(b));
    });
    p.on('gap', (g) => this.capture?.run.gap(g.sample + g.lost));
    p.on('event', (e) => {
      this.events.push(e);
      const max = o.eventHistory ?? 1000;
      if (this.events.length > max) this.events.splice(0, this.events.length - max);
      this.trackAlarm(e);
      this.subscribers.forEach((s) => s.event(e));
    });
    const lf = o.lowFrequency;
    if (lf) {
      const pacer = new LatestPacer<LowFrequencyUpdate>((update) => this.subscribers.forEach((s) => s.lowFrequency?.({ type: 'lowfreq', update })), 100);
      lf.onContext((context) => this.subscribers.forEach((s) => s.lowFrequency?.({ type: 'lowfreq-context', context })));
      lf.onUpdate((u) => pacer.offer(u));
    }
  }

  lowFrequencyLatest(): ReturnType<NonNullable<ServerBackend['lowFrequencyLatest']>> {
    const context = this.o.lowFrequency?.context();
    return context ? { context, update: this.o.lowFrequency!.latest() } : null;
  }

  subscribe(s: BackendSubscriber): () => void {
    this.subscribers.add(s);
    return () => this.subscribers.delete(s);
  }

  streamInfo(): StreamInfo | null {
    return this.o.pipeline.stream ?? null;
  }

  latestSnapshot(): SpectrumSnapshot | null {
    return this.last;
  }

  /** The newest baseline: one captured here replaces the one the run started with. */
  private currentBaseline(): { file: string; baseline: BaselineFile } | null {
    return this.captured ?? this.o.baseline?.() ?? null;
  }

  baseline(): BaselineOverlay | null {
    const b = this.currentBaseline();
    if (!b) return null;
    return {
      file: b.file,
      settings: b.baseline.settings,
      channels: b.baseline.channels.map((c) => ({ name: c.name, psd: Float64Array.from(c.psd), equivalentAverages: c.equivalentAverages })),
    };
  }

  recentEvents(limit: number): FloorlineEvent[] {
    return this.events.slice(-limit);
  }

  /** Configured, else measured: the newest mains event's line frequency over its harmonic number. */
  mainsHz(): number | null {
    const configured = this.o.mainsHz?.();
    if (configured) return configured;
    for (let i = this.events.length - 1; i >= 0; i--) {
      const e = this.events[i];
      if (e.rule === 'mains' && e.frequency !== undefined && e.harmonic) return e.frequency / e.harmonic;
    }
    return null;
  }

  /** One row per alarm: per band for band rules, per line (harmonic or 0.1 Hz) for mains and spur, else per channel. */
  private trackAlarm(e: FloorlineEvent): void {
    if (e.kind !== 'alarm' || e.state === 'settled') return; // settled restates a raised alarm's level
    const line = e.rule === 'mains' ? `h${e.harmonic ?? ''}` : e.rule === 'spur' && e.frequency !== undefined ? e.frequency.toFixed(1) : '';
    const key = `${e.rule}|${e.channel}|${e.band ? e.band.join('-') : ''}|${line}`;
    const prev = this.alarmRows.get(key);
    const raised = e.state === 'raised';
    this.alarmRows.set(key, {
      rule: e.rule,
      channel: e.channel,
      ...(e.band ? { band: e.band } : {}),
      ...(line && e.frequency !== undefined ? { frequency: e.frequency } : {}),
      state: raised ? 'raised' : 'clear',
      // A repeat while still raised keeps the acknowledgement; a new raise after a clear asks again.
      acknowledged: raised && prev?.state === 'raised' ? prev.acknowledged : false,
      sample: e.sample,
    });
  }

  private bandRows(): BandRow[] {
    const s = this.last;
    if (!s) return [];
    const base = this.currentBaseline()?.baseline;
    // Bin-by-bin comparison only with a baseline taken with the same settings (otherwise the table says so).
    const comparable = base !== undefined && firstSettingMismatch(base.settings, s.settings) === undefined;
    const rows: BandRow[] = [];
    const half = windowMainLobeHalfWidth(s.settings.window);
    const rules = this.o.detectorStatus?.();
    for (const ch of s.channels) {
      const ruled = rules?.find((r) => r.channel === ch.name)?.bands;
      const bands = this.o.bands?.(ch.name) ?? defaultBands(s.settings.sampleRate, s.settings.segment, half);
      const bch = comparable ? base!.channels.find((c) => c.name === ch.name) : undefined;
      if (this.scratch.length < ch.psd.length) this.scratch = new Float64Array(ch.psd.length);
      for (const band of bands) {
        const r = bandBins(ch.psd.length, s.binHz, band.low, band.high);
        let p = 0;
        let pb = 0;
        for (let k = r.first; k <= r.last; k++) {
          p += ch.psd[k];
          if (bch) pb += bch.psd[k];
        }
        const rms = Math.sqrt(p * s.binHz);
        const baselineRms = bch ? Math.sqrt(pb * s.binHz) : null;
        // The rule's own reading when it runs (its level leaves out new lines, so it can differ from the plain
        // ratio of band powers shown otherwise); the alarm state is the rule's, with its hysteresis.
        const rule = ruled?.find((r) => r.low === band.low && r.high === band.high);
        const alarm = this.alarmRows.get(`band-rise|${ch.name}|${band.low}-${band.high}|`);
        const finite = (x: number | undefined): number | null => (x !== undefined && Number.isFinite(x) ? x : null);
        rows.push({
          channel: ch.name,
          low: band.low,
          high: band.high,
          rms,
          baselineRms,
          deltaDb: finite(rule?.levelDb) ?? (baselineRms ? DB((rms * rms) / (baselineRms * baselineRms)) : null),
          thresholdDb: finite(rule?.thresholdDb),
          state: !bch
            ? 'no-baseline'
            : (rule ? rule.active : alarm?.state === 'raised')
              ? 'raised'
              : rule?.coveredByLines
                ? 'not-judged'
                : rule?.held
                  ? 'held'
                  : 'ok',
          floorDensity: Math.sqrt(median(ch.psd, r.first, r.last, this.scratch)),
        });
      }
    }
    return rows;
  }

  health(): { ok: boolean; reason: string } {
    return this.o.health?.() ?? { ok: true, reason: 'no health checks configured' };
  }

  status(): BackendStatus {
    const p = this.o.pipeline;
    const info = p.stream;
    const c = p.counters();
    const sc = this.o.sourceCounters?.();
    const settings = p.analysisSettings ?? null;
    const b = this.currentBaseline();
    return {
      source: info ? info.source : null,
      sampleRate: info?.sampleRate ?? null,
      channels: info ? info.channels.map((x) => ({ name: x.name, unit: x.unit })) : [],
      samples: c.samples,
      t: info && c.lastSample >= 0 ? (c.lastSample + 1) / info.sampleRate : 0,
      gaps: c.gaps,
      lostSamples: c.lostSamples,
      crcErrors: sc?.crcErrors ?? 0,
      droppedBlocks: c.droppedBlocks,
      recording: this.o.recorder?.state() ?? { state: 'off' },
      replay: this.o.replay?.() ?? null,
      settings,
      averaging: p.averaging,
      baseline: b ? { file: b.file, hash: b.baseline.settingsHash } : null,
      spectrumSample: this.last?.sample ?? null,
      bands: this.bandRows(),
      alarms: [...this.alarmRows.values()],
      ...(this.o.lowFrequency ? { lowFrequency: this.o.lowFrequency.status() } : {}),
      ...(this.o.disk ? { disk: this.o.disk() } : {}),
    };
  }

  captureBaseline(req: { seconds: number; name?: string; notes?: string }): Promise<{ file: string }> {
    const p = this.o.pipeline;
    const info = p.stream;
    const settings = p.analysisSettings;
    if (!info || !settings) return Promise.reject(new BackendRefusal('failed', 'no stream yet: wait for the first spectrum'));
    if (this.capture) return Promise.reject(new BackendRefusal('failed', `a baseline capture into ${this.capture.file} is still running`));
    const name = req.name ?? `baseline-${p.counters().lastSample + 1}.json`;
    const file = `baselines/${name}`;
    this.o.data.resolve(file, 'baseline'); // refuse a bad name now (PathOutsideError → path-refused), not after the span
    const half = windowMainLobeHalfWidth(settings.window);
    const run = new BaselineCapture({
      settings,
      channels: info.channels.map((c) => ({ name: c.name, unit: c.unit })),
      firstSample: p.counters().lastSample + 1,
      samples: Math.round(req.seconds * info.sampleRate),
      bands: defaultBands(settings.sampleRate, settings.segment, half),
      source: `${info.source.kind}: ${info.source.label}`,
      notes: req.notes,
    });
    return new Promise((resolve, reject) => {
      this.capture = {
        run,
        file,
        resolve: (v) => resolve(v),
        reject,
      };
    });
  }

  private feedCapture(b: { firstSample: number; frames: number; data: Float64Array[] }): void {
    const cap = this.capture;
    if (!cap || !cap.run.push(b)) return;
    this.capture = null;
    let result: BaselineFile;
    try {
      result = cap.run.result(this.o.pipeline.wallTimeAt(cap.run.endSample - 1));
    } catch (err) {
      cap.reject(err as Error);
      return;
    }
    const path = this.o.data.resolve(cap.file, 'baseline');
    mkdirSync(this.o.data.baselines, { recursive: true });
    writeFile(path, JSON.stringify(result, null, 1) + '\n').then(
      () => {
        this.captured = { file: cap.file, baseline: result };
        this.o.onBaselineCaptured?.(cap.file, result);
        cap.resolve({ file: cap.file });
      },
      (err: Error) => cap.reject(new BackendRefusal('failed', `cannot write ${cap.file}: ${err.message}`)),
    );
  }

  async setRecording(on: boolean): Promise<RecordingState> {
    const r = this.o.recorder;
    if (!r) throw new BackendRefusal('unsupported', 'this command runs without a recorder; recordings are made by `floorline run`');
    return on ? r.start() : r.stop();
  }

  setAnalysis(change: AnalysisChange): void {
    this.o.pipeline.configure({
      analysis: { ...(change.segment !== undefined ? { segment: change.segment } : {}), ...(change.window !== undefined ? { window: change.window } : {}) },
      averaging: change.averaging,
    });
  }

  acknowledge(ref: AlarmRef): boolean {
    if (!this.o.acknowledge) throw new BackendRefusal('unsupported', 'no alarm rules are running (start with --baseline FILE or capture one)');
    // Events carry band edges rounded for reading; the rules know the exact ones. Match within 1e-4 relative.
    let band = ref.band;
    if (band) {
      const near = (a: number, b: number): boolean => Math.abs(a - b) <= 1e-4 * Math.max(Math.abs(a), Math.abs(b), 1e-9);
      const exact = this.o.bands?.(ref.channel)?.find((b) => near(b.low, band![0]) && near(b.high, band![1]));
      if (exact) band = [exact.low, exact.high];
    }
    const ok = this.o.acknowledge({ ...ref, ...(band ? { band } : {}) });
    for (const row of this.alarmRows.values()) {
      if (row.rule === ref.rule && row.channel === ref.channel && (!ref.band || (row.band && row.band[0] === ref.band[0] && row.band[1] === ref.band[1]))) row.acknowledged = ok || row.acknowledged;
    }
    return ok;
  }
}

export type { AgentStatus };
