// What the server needs from the rest of the agent, and nothing more. The pipeline (live, demo or replay) adapts
// itself to this; tests use a small double of it. Shapes are structural: the pipeline's SpectrumSnapshot and
// CalibratedBlock satisfy ServerSnapshot and ServerBlock as they are.
import type { FloorlineEvent, EventRule } from '../../protocol/events.ts';
import type { AnalysisSettings, AveragingSpec } from '../../protocol/settings.ts';
import type { StreamInfo } from '../../protocol/stream.ts';
import type { AgentStatus, RecordingState } from '../../protocol/messages.ts';
import type { LowFrequencyContext, LowFrequencyUpdate } from '../../protocol/low-frequency-messages.ts';

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
  channels: { name: string; psd: Float64Array; equivalentAverages: number }[];
}

/** Callbacks run synchronously, in sample order, on the agent's thread: keep them short, copy what you keep. */
export interface BackendSubscriber {
  info(info: StreamInfo): void;
  snapshot(snapshot: ServerSnapshot): void;
  block(block: ServerBlock): void;
  event(event: FloorlineEvent): void;
  /** Live low-frequency view (when the backend runs one): its context and paced updates. */
  lowFrequency?(message: { type: 'lowfreq-context'; context: LowFrequencyContext } | { type: 'lowfreq'; update: LowFrequencyUpdate }): void;
}

/** The status fields the backend owns; the server adds protocol, clients, mainsHz and wallTime. */
export type BackendStatus = Omit<AgentStatus, 'protocol' | 'clients' | 'wallTime' | 'mainsHz'>;

export interface AnalysisChange {
  averaging?: AveragingSpec;
  segment?: number;
  window?: string;
}

export interface AlarmRef {
  rule: EventRule;
  channel: string;
  band?: [number, number];
}

/** A request the backend will not carry out; `code` goes to the client as the reply's error code. */
export class BackendRefusal extends Error {
  override readonly name = 'BackendRefusal';
  constructor(
    readonly code: 'unsupported' | 'failed' | 'path-refused' | 'bad-message',
    message: string,
  ) {
    super(message);
  }
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
  captureBaseline(request: { seconds: number; name?: string; notes?: string }): Promise<{ file: string }>;
  setRecording(on: boolean): Promise<RecordingState>;
  /** Applies new analysis settings from the next snapshot on; throws BackendRefusal or RangeError naming what is wrong. */
  setAnalysis(change: AnalysisChange): void;
  acknowledge(ref: AlarmRef): boolean;
  /** The low-frequency context and newest update, for a client that connects later (absent: no such view). */
  lowFrequencyLatest?(): { context: LowFrequencyContext; update: LowFrequencyUpdate | null } | null;
}

export interface HistoryAccess {
  /** The store file. */
  path: string;
  /** Adds an operator note at the current sample; returns where it was stamped. */
  note(text: string, incident?: string): { sample: number; t: number; wallTime: string };
}
