// A test double of ServerBackend: the server is a transport, so its tests drive it with snapshots whose values
// are known in closed form (white noise of RMS sigma has one-sided density 2·sigma²/fs, common practice).
import { mkdirSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import type { FloorlineEvent } from '../../../protocol/events.ts';
import type { StreamInfo } from '../../../protocol/stream.ts';
import type {
  BackendStatus,
  BackendSubscriber,
  ServerBackend,
  ServerSnapshot,
  BaselineOverlay,
  AnalysisChange,
} from '../../../agent/server/backend.ts';
import { MonitorRefusal } from '../../../agent/monitor/refusal.ts';
import { alarmId, bandId } from '../../../protocol/ids.ts';
import { resolveInside } from '../../../agent/config/safe-path.ts';
import type { RecordingState } from '../../../protocol/messages.ts';

export interface FakeOptions {
  dataRoot: string;
  sampleRate?: number;
  segment?: number;
  channels?: number;
  sigma?: number;
}

export class FakeBackend implements ServerBackend {
  readonly dataRoot: string;
  readonly subs = new Set<BackendSubscriber>();
  readonly sampleRate: number;
  readonly segment: number;
  readonly sigma: number;
  readonly info: StreamInfo;
  sample = -1;
  snapshotCount = 0;
  last: ServerSnapshot | null = null;
  events: FloorlineEvent[] = [];
  acknowledged: string[] = [];
  shelved: { alarm: string; seconds: number }[] = [];
  analysisChanges: AnalysisChange[] = [];
  recording: RecordingState = { state: 'off' };
  baselineOverlay: BaselineOverlay | null = null;

  constructor(o: FakeOptions) {
    this.dataRoot = o.dataRoot;
    this.sampleRate = o.sampleRate ?? 8000;
    this.segment = o.segment ?? 1024;
    this.sigma = o.sigma ?? 1e-6;
    const n = o.channels ?? 2;
    this.info = {
      sampleRate: this.sampleRate,
      channels: Array.from({ length: n }, (_, i) => ({
        name: `ch${i}`,
        unit: 'V',
        scale: 1,
        fullScaleCounts: Infinity,
      })),
      source: { kind: 'simulator', label: 'test double' },
      firstSample: 0,
    };
    mkdirSync(join(o.dataRoot, 'baselines'), { recursive: true });
    mkdirSync(join(o.dataRoot, 'recordings'), { recursive: true });
  }

  subscribe(s: BackendSubscriber): () => void {
    this.subs.add(s);
    return () => this.subs.delete(s);
  }
  streamInfo(): StreamInfo | null {
    return this.info;
  }
  latestSnapshot(): ServerSnapshot | null {
    return this.last;
  }
  baseline(): BaselineOverlay | null {
    return this.baselineOverlay;
  }
  recentEvents(limit: number): FloorlineEvent[] {
    return this.events.slice(-limit);
  }
  mainsHz(): number | null {
    return 50;
  }

  /** White density 2σ²/fs in every bin but DC and Nyquist (σ²/fs there, scipy's one-sided convention). */
  density(): number {
    return (2 * this.sigma * this.sigma) / this.sampleRate;
  }

  bandRms(low: number, high: number): number {
    const binHz = this.sampleRate / this.segment;
    let p = 0;
    const psd = this.last?.channels[0].psd;
    if (!psd) return 0;
    for (let k = 0; k < psd.length; k++) if (k * binHz >= low && k * binHz <= high) p += psd[k] * binHz;
    return Math.sqrt(p);
  }

  status(): BackendStatus {
    const bands = this.info.channels.flatMap((c) =>
      [
        [20, 2000],
        [2000, 4000],
      ].map(([low, high]) => ({
        id: bandId(c.name, low, high),
        channel: c.name,
        low,
        high,
        rms: this.bandRms(low, high),
        baselineRms: null,
        deltaDb: null,
        thresholdDb: 3,
        state: 'no-baseline' as const,
        floorDensity: Math.sqrt(this.density()),
      })),
    );
    return {
      source: this.info.source,
      sampleRate: this.sampleRate,
      channels: this.info.channels.map((c) => ({ name: c.name, unit: c.unit })),
      samples: this.sample + 1,
      t: (this.sample + 1) / this.sampleRate,
      gaps: 0,
      lostSamples: 0,
      crcErrors: 3,
      syncErrors: 0,
      nonfiniteFrames: 0,
      droppedBlocks: 0,
      recording: this.recording,
      replay: null,
      settings: { sampleRate: this.sampleRate, segment: this.segment, window: 'hann', overlap: 0.5, detrend: 'mean' },
      averaging: { mode: 'mean' },
      baseline: null,
      spectrumSample: this.last?.sample ?? null,
      bands,
      alarms: [
        {
          id: alarmId({ rule: 'band-rise', channel: 'ch0', band: [20, 2000] }),
          rule: 'band-rise',
          channel: 'ch0',
          band: [20, 2000],
          state: 'clear',
          acknowledged: false,
          sample: 0,
        },
      ],
    };
  }

  /** Emits one block of `frames` samples and a snapshot whose PSD is the white density, every bin scaled by `gain`. */
  step(frames = 800, gain = 1): ServerSnapshot {
    const first = this.sample + 1;
    const data = this.info.channels.map((_, c) =>
      Float64Array.from({ length: frames }, (_, i) => c + (first + i) * 1e-3),
    );
    this.sample = first + frames - 1;
    for (const s of this.subs) s.block({ firstSample: first, frames, data });
    const bins = this.segment / 2 + 1;
    const d = this.density() * gain;
    const count = ++this.snapshotCount;
    const snap: ServerSnapshot = {
      sample: this.sample,
      t: this.sample / this.sampleRate,
      settings: { sampleRate: this.sampleRate, segment: this.segment, window: 'hann', overlap: 0.5, detrend: 'mean' },
      averaging: { mode: 'mean' },
      binHz: this.sampleRate / this.segment,
      nenbw: 1.5,
      enbwHz: (1.5 * this.sampleRate) / this.segment,
      channels: this.info.channels.map((c) => {
        const psd = new Float64Array(bins).fill(d);
        psd[0] = d / 2;
        psd[bins - 1] = d / 2;
        return { name: c.name, unit: c.unit, psd, equivalentAverages: count };
      }),
    };
    this.last = snap;
    for (const s of this.subs) s.snapshot(snap);
    return snap;
  }

  emit(e: FloorlineEvent): void {
    this.events.push(e);
    for (const s of this.subs) s.event(e);
  }

  async captureBaseline(req: { seconds: number; name?: string; notes?: string }): Promise<{ file: string }> {
    const rel = `baselines/${req.name ?? 'baseline.json'}`;
    const path = resolveInside(this.dataRoot, rel, 'baseline');
    writeFileSync(path, JSON.stringify({ seconds: req.seconds, notes: req.notes ?? '' }));
    return { file: rel };
  }
  async setRecording(on: boolean): Promise<RecordingState> {
    this.recording = on ? { state: 'recording', file: 'recordings/test.wav' } : { state: 'off' };
    return this.recording;
  }
  setAnalysis(change: AnalysisChange): void {
    if (change.window === 'no-such-window') throw new RangeError(`window 'no-such-window' is not one of hann, rect`);
    if (change.segment !== undefined && change.segment > 65536)
      throw new MonitorRefusal('unsupported', 'segment above 65536 is not offered live');
    this.analysisChanges.push(change);
  }
  acknowledge(alarm: string): boolean {
    this.acknowledged.push(alarm);
    return true;
  }
  shelve(alarm: string, seconds: number): { shelved: boolean; untilSample: number } {
    this.shelved.push({ alarm, seconds });
    return { shelved: true, untilSample: this.sample + Math.round(seconds * this.sampleRate) };
  }
}
