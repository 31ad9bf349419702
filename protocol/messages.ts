// Every message between the agent and the dashboard, as one discriminated union per direction (on `type`).
// Pure types plus a few constants: the dashboard bundle imports this module, so no Node or DOM here.
import type { CoherenceTraceMessage } from './coherence-messages.ts';
import type { ChannelFront } from './front-end.ts';
import type { FloorlineEvent, EventRule } from './events.ts';
import type { AnalysisSettings, AveragingSpec } from './settings.ts';
import type { StreamInfo, SourceKind } from './stream.ts';
import type { LowFrequencyContext, LowFrequencyStatus, LowFrequencyUpdate } from './low-frequency-messages.ts';
import type { LimitMasksMessage } from './limit-masks.ts';

/** Bumped on any incompatible change to these messages or to the binary frame layout. */
export const WIRE_PROTOCOL_VERSION = 2;

/** Largest client → agent message the server accepts, bytes. Control messages are tiny; anything larger closes that client. */
export const MAX_CLIENT_MESSAGE_BYTES = 4096;

/** Stable error codes in replies and error messages (listed in agent/server/README.md). */
export type WireErrorCode =
  | 'bad-json' // not parseable as JSON
  | 'bad-message' // JSON, but not a valid message (field missing, wrong type, out of range)
  | 'unknown-type' // `type` is not one this protocol version knows
  | 'binary-refused' // clients send JSON text only
  | 'path-refused' // a file name that would leave the data folder
  | 'unsupported' // the backend cannot do this (e.g. recording during a replay without a recorder)
  | 'rate-limited' // too many control actions too quickly; message says when to try again
  | 'exists' // a file of that name exists and the request did not ask to replace it
  | 'failed'; // the backend tried and failed; message says why

export interface WireError {
  code: WireErrorCode;
  message: string;
}

// ---------------------------------------------------------------- client → agent

export interface CaptureBaselineRequest {
  type: 'capture-baseline';
  id: number;
  /** Span of sample time to average, seconds. */
  seconds: number;
  /** File name inside the data folder's baselines/ (no folders); the agent picks one when absent. */
  name?: string;
  notes?: string;
  /** Overwrite a baseline of that name; without it an existing file is never replaced (reply code 'exists'). */
  replace?: boolean;
}

export interface RecordingRequest {
  type: 'recording';
  id: number;
  action: 'start' | 'stop';
}

export interface SetAnalysisRequest {
  type: 'set-analysis';
  id: number;
  averaging?: AveragingSpec;
  segment?: number;
  window?: string;
}

export interface AcknowledgeRequest {
  type: 'acknowledge';
  id: number;
  /** The alarm's stable id (AlarmRow.id; protocol/ids.ts alarmId of any of its events). */
  alarm: string;
}

export interface ShelveRequest {
  type: 'shelve';
  id: number;
  alarm: string;
  /** Silence it for this much sample time from the newest sample, seconds. */
  seconds: number;
}

/** An operator note, stamped by the agent with its current sample (stored in the history and the event log). */
export interface NoteRequest {
  type: 'note';
  id: number;
  text: string;
  incident?: string;
}

/** Compare against the baseline in use before the current one again (the agent keeps one previous baseline). */
export interface RestoreBaselineRequest {
  type: 'restore-baseline';
  id: number;
}

export interface StatusRequest {
  type: 'get-status';
  id: number;
}

export type ClientMessage =
  | CaptureBaselineRequest
  | RecordingRequest
  | SetAnalysisRequest
  | AcknowledgeRequest
  | ShelveRequest
  | NoteRequest
  | RestoreBaselineRequest
  | StatusRequest;
export type ClientMessageType = ClientMessage['type'];

// ---------------------------------------------------------------- agent → client

/** What a spectrum frame needs to be read and labelled: sent on connect and whenever the analysis changes. */
export interface SpectrumContext {
  /** Increments on every change; binary frames carry it so stale frames can be told apart. */
  id: number;
  settings: AnalysisSettings;
  averaging: AveragingSpec;
  /** Normalised equivalent noise bandwidth of the window, bins (N·Σw²/(Σw)²). */
  nenbw: number;
  /** ENBW in Hz = nenbw · binHz: the resolution bandwidth a tone's power spreads over. */
  enbwHz: number;
  binHz: number;
  bins: number;
  /** `front` where the gain, budget or converter of the channel is known (protocol/front-end.ts). */
  channels: { name: string; unit: string; front?: ChannelFront }[];
  /** Mains fundamental when the context was made, Hz; later values come with each status. */
  mainsHz: number | null;
}

/**
 * A band's state in the table: `raised` (alarm announced), `held` (new alarms held while clipped segments still
 * weigh in the average), `not-judged` (new lines cover every bin of the band), `ok`, or `no-baseline`.
 */
export type AlarmCondition = 'ok' | 'raised' | 'held' | 'not-judged' | 'no-baseline';

/** One row of the band table. Densities and RMS in the channel unit. */
export interface BandRow {
  /** Stable id of the band (protocol/ids.ts bandId), e.g. "bridge:20-2000". */
  id: string;
  channel: string;
  low: number;
  high: number;
  /** Live band RMS = sqrt(Σ psd·binHz) over the band's bins. */
  rms: number;
  baselineRms: number | null;
  /** 10·log10(live power / baseline power). */
  deltaDb: number | null;
  thresholdDb: number | null;
  state: AlarmCondition;
  /** Median amplitude density over the band's bins, unit/√Hz (the band's "floor"). */
  floorDensity: number;
}

export interface AlarmRow {
  /** Stable id of the alarm (protocol/ids.ts alarmId): what acknowledge and shelve name. */
  id: string;
  rule: EventRule;
  channel: string;
  band?: [number, number];
  /** For spur and mains: the line's frequency, Hz (one row per tracked line). */
  frequency?: number;
  state: 'raised' | 'clear';
  acknowledged: boolean;
  /** Sample index of the last change. */
  sample: number;
  /** The incident the alarm belongs to (the same id its events carry). */
  incident?: string;
}

export interface RecordingState {
  state: 'off' | 'recording' | 'failed';
  /** Path relative to the data folder. */
  file?: string;
  error?: string;
}

export interface ReplayState {
  /** Sample index of the replay position. */
  position: number;
  /** Length of the recording in samples. */
  duration: number;
  speed: number | 'max';
  loop: boolean;
  file: string;
}

/** Disk accounting of the data folder's recordings (present when the rig config sets a retention). */
export interface DiskState {
  usedBytes: number;
  recordingsBytes: number;
  capturesBytes: number;
  freeBytes: number;
  minFreeBytes: number;
  /** Days between the oldest kept recording and now. */
  historyDays: number;
  /** Continuous recording paused by the free-space floor. */
  paused: boolean;
  deletedFiles: number;
}

/** The history store of the run (present when the agent keeps one). */
export interface StoreStatus {
  /** The store file. */
  file: string;
  /** False while the disk refuses writes (said once; the span not stored is recorded when it works again). */
  storing: boolean;
  /** Wall time of the last commit, ISO-8601 UTC (null: none yet). */
  lastCommit: string | null;
  /** Rows and records waiting for the next commit. */
  pending: number;
  /** True while the store has gone longer than the stall limit (10 s) without a commit while rows wait. */
  stalled: boolean;
  /** Times the store stalled so far in this process. */
  commitStalls: number;
}

export interface AgentStatus {
  protocol: number;
  disk?: DiskState;
  store?: StoreStatus;
  source: { kind: SourceKind; label: string } | null;
  sampleRate: number | null;
  channels: { name: string; unit: string }[];
  /** Frames (sample instants) delivered by the source so far. */
  samples: number;
  /** Sample time of the newest sample, seconds. */
  t: number;
  gaps: number;
  lostSamples: number;
  crcErrors: number;
  /** Bytes skipped to find a frame, malformed and rejected frames, and bad text lines, from the source. */
  syncErrors: number;
  /** Frames excluded because they held NaN, ±Inf or a value beyond float32. */
  nonfiniteFrames: number;
  droppedBlocks: number;
  recording: RecordingState;
  replay: ReplayState | null;
  settings: AnalysisSettings | null;
  averaging: AveragingSpec | null;
  baseline: { file: string; hash: string } | null;
  /** The baseline before the current one, which a restore-baseline request brings back (absent: none kept). */
  previousBaseline?: { file: string; hash: string } | null;
  /** Sample index of the spectrum the band rows were computed from (null before the first). */
  spectrumSample: number | null;
  bands: BandRow[];
  alarms: AlarmRow[];
  /** `dropped`: clients the agent closed (too slow, flooding, no heartbeat answer), each also logged with its reason. */
  clients: { connected: number; framesSent: number; framesSkipped: number; dropped: number };
  /** Mains fundamental for the harmonic markers (configured or measured), Hz; null when unknown. */
  mainsHz: number | null;
  /** Live low-frequency figures per channel (1/f fit, 0.1–10 Hz peak-to-peak); absent when the view is not wired. */
  lowFrequency?: LowFrequencyStatus[];
  /**
   * Live coherence of each channel pair the coherent rule judges: its bound (max of the rule's floor and the chance
   * bound for the estimate's equivalent averages) and γ² at the lines both channels show; absent without pairs.
   */
  coherence?: CoherencePairStatus[];
  /** Wall-clock label of this status, ISO-8601 UTC. */
  wallTime: string;
}

/** Results of successful requests, by request type. */
export interface ReplyResults {
  'capture-baseline': { file: string };
  recording: { recording: RecordingState };
  'set-analysis': { context: SpectrumContext };
  acknowledge: { acknowledged: boolean };
  shelve: { shelved: boolean; untilSample: number };
  note: { sample: number; t: number; wallTime: string };
  'get-status': { status: AgentStatus };
  /** `file`: the baseline compared against from the next spectrum on; `previous`: the one it replaced. */
  'restore-baseline': { file: string; previous: string };
}

export type ReplyMessage =
  | {
      [K in ClientMessageType]: { type: 'reply'; id: number; request: K; ok: true; result: ReplyResults[K] };
    }[ClientMessageType]
  | { type: 'reply'; id: number; request: ClientMessageType; ok: false; error: WireError };

export type ServerMessage =
  | {
      type: 'hello';
      protocol: number;
      info: StreamInfo | null;
      context: SpectrumContext | null;
      status: AgentStatus;
      /** The newest events, oldest first. */
      events: FloorlineEvent[];
    }
  | { type: 'info'; info: StreamInfo }
  | { type: 'context'; context: SpectrumContext }
  | { type: 'status'; status: AgentStatus }
  | { type: 'event'; event: FloorlineEvent }
  /** Added in protocol 1 without a bump: new message types only, which older pages ignore. */
  | { type: 'lowfreq-context'; context: LowFrequencyContext }
  | { type: 'lowfreq'; update: LowFrequencyUpdate }
  | CoherenceTraceMessage
  /** The limit masks drawn with the spectrum (protocol/limit-masks.ts); a new type, which older pages ignore. */
  | LimitMasksMessage
  | ReplyMessage
  /** A message that could not be answered as a reply (bad JSON, no usable id). */
  | { type: 'error'; error: WireError };

export type ServerMessageType = ServerMessage['type'];

/** One channel pair in AgentStatus.coherence. */
export interface CoherencePairStatus {
  a: string;
  b: string;
  equivalentAverages: number;
  threshold: number;
  lines: { frequency: number; coherence: number; active: boolean }[];
}
