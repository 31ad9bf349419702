// What the server needs from the rest of the agent, and nothing more. The monitor's read model (agent/monitor/)
// is adapted to this by monitor-backend.ts; tests use a small double of it. Shapes are structural: the pipeline's SpectrumSnapshot and
// CalibratedBlock satisfy ServerSnapshot and ServerBlock as they are.
import type { FloorlineEvent } from '../../protocol/events.ts';
import type { AnalysisSettings, AveragingSpec } from '../../protocol/settings.ts';
import type { StreamInfo } from '../../protocol/stream.ts';
import type { RecordingState } from '../../protocol/messages.ts';
import type { MonitorStatus } from '../monitor/monitor.ts';
import type { LowFrequencyContext, LowFrequencyUpdate } from '../../protocol/low-frequency-messages.ts';
import type { MaskSet } from './channel-masks.ts';

export interface ServerSnapshot {
  /** Index of the last sample the estimate used; t = sample / sampleRate. */
  sample: number;
  t: number;
  settings: AnalysisSettings;
  averaging: AveragingSpec;
  binHz: number;
  nenbw: number;
  enbwHz: number;
  channels: { name: string; unit: string; psd: Float64Array; equivalentAverages: number }[];
  /** Channel pairs' coherence, when the pipeline cross-analyses them. */
  coherence?: readonly { a: string; b: string; coherence: Float64Array; equivalentAverages: number }[];
}

/** Calibrated samples in channel units; arrays may be reused by the caller after the callback returns. */
export interface ServerBlock {
  firstSample: number;
  frames: number;
  data: Float64Array[];
}

export interface BaselineOverlay {
  file: string;
  settings: AnalysisSettings;
  channels: readonly { name: string; psd: Float64Array; equivalentAverages: number }[];
}

/** Callbacks run synchronously, in sample order, on the agent's thread: keep them short, copy what you keep. */
export interface BackendSubscriber {
  info(info: StreamInfo): void;
  snapshot(snapshot: ServerSnapshot): void;
  block(block: ServerBlock): void;
  event(event: FloorlineEvent): void;
  /** Live low-frequency view (when the backend runs one): its context and paced updates. */
  lowFrequency?(
    message:
      { type: 'lowfreq-context'; context: LowFrequencyContext } | { type: 'lowfreq'; update: LowFrequencyUpdate },
  ): void;
}

/** The status fields the backend owns (the monitor's); the server adds protocol, clients, mainsHz and wallTime. */
export type BackendStatus = MonitorStatus;

export interface AnalysisChange {
  averaging?: AveragingSpec;
  segment?: number;
  window?: string;
}

export interface ServerBackend {
  /** Absolute path of the data folder: the only place client-named files are read from or written to. */
  readonly dataRoot: string;
  /** The history store the session writes (read by /api/trend and /api/incidents; notes go in through it). */
  readonly history?: HistoryAccess;
  /** Registers a subscriber; returns the function that removes it. */
  subscribe(subscriber: BackendSubscriber): () => void;
  streamInfo(): StreamInfo | null;
  status(): BackendStatus;
  /** Liveness for GET /healthz: samples arriving and analysis keeping up. */
  health?(): { ok: boolean; reason: string };
  latestSnapshot(): ServerSnapshot | null;
  baseline(): BaselineOverlay | null;
  /** Newest events, oldest first, at most `limit`. */
  recentEvents(limit: number): FloorlineEvent[];
  /** Mains fundamental for the dashboard's harmonic markers (configured or measured), Hz. */
  mainsHz(): number | null;
  /** Averages the next `seconds` of sample time into a baseline file under baselines/; resolves with its path relative to dataRoot. */
  captureBaseline(request: {
    seconds: number;
    name?: string;
    notes?: string;
    replace?: boolean;
  }): Promise<{ file: string }>;
  setRecording(on: boolean): Promise<RecordingState>;
  /** Compares against the previous baseline again (the current one becomes the previous); throws MonitorRefusal when none is kept or it no longer fits the settings. */
  restoreBaseline?(): { file: string; previous: string };
  /** Applies new analysis settings from the next snapshot on; throws MonitorRefusal or RangeError naming what is wrong. */
  setAnalysis(change: AnalysisChange): void;
  /** Acknowledges the alarm with this id (AlarmRow.id); false when no active alarm took it. */
  acknowledge(alarmId: string): boolean;
  /** Silences the alarm with this id for `seconds` of sample time; says until which sample. */
  shelve(alarmId: string, seconds: number): { shelved: boolean; untilSample: number };
  /** Limit masks of the limit rule by channel name ('*' = every channel), for the dashboard (absent: none). */
  limitMasks?(): MaskSet | undefined;
  /** The low-frequency context and newest update, for a client that connects later (absent: no such view). */
  lowFrequencyLatest?(): { context: LowFrequencyContext; update: LowFrequencyUpdate | null } | null;
}

export interface HistoryAccess {
  /** The store file. */
  path: string;
  /** Adds an operator note at the current sample; returns where it was stamped. */
  note(text: string, incident?: string): { sample: number; t: number; wallTime: string };
}
