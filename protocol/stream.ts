// The contract between sources (serial board, replay, simulator) and the pipeline.
// Time is sample time: a block carries the index of its first sample; wall time is only a label.

import type { BudgetParameters } from './front-end.ts';

export interface ChannelInfo {
  /** Stable channel name, e.g. "ch0" or a name from the board descriptor. */
  name: string;
  /** Calibrated unit after scaling, e.g. "V"; "FS" for unscaled integer PCM. */
  unit: string;
  /** Calibration: unit per raw count (1 for float sources already in units). */
  scale: number;
  /** Full scale in raw counts (peak magnitude); clip detection uses this. Infinity if unknown. */
  fullScaleCounts: number;
  /** The rig config's calibration, once applied (recordings carry it so a replay does not apply it twice). */
  calibration?: ChannelCalibration;
  /** What a recording's sidecar says of the front end (gain, noise budget, converter step), if anything. */
  frontEnd?: { gain?: number; budget?: BudgetParameters; lsb?: number };
}

/** Per-channel calibration from a rig config, as applied to the samples. */
export interface ChannelCalibration {
  unit: string;
  /** Unit per raw ADC count that replaced the board's own. */
  voltsPerCount?: number;
  /** Front-end gain ahead of the ADC, V/V. */
  gain?: number;
  /** Samples were divided by the gain: they read at the amplifier input. */
  inputReferred: boolean;
  /** Expected white floor from the noise budget, unit/√Hz. */
  budget?: number;
}

export type SourceKind = 'serial' | 'replay' | 'simulator';

export interface StreamInfo {
  sampleRate: number;
  channels: ChannelInfo[];
  source: { kind: SourceKind; label: string };
  boardId?: string;
  firmware?: string;
  /** Sample index of the first sample this source will deliver (replays of a rotated recording may start > 0). */
  firstSample: number;
  /** ISO-8601 UTC wall time at firstSample, if known (label only). */
  startWallTime?: string;
}

export interface SampleBlock {
  /** Index of the first frame in this block, in the source's continuous sample count. */
  firstSample: number;
  /** Number of frames (sample instants) in this block. */
  frames: number;
  /** One array per channel, length >= frames, raw counts (multiply by ChannelInfo.scale for units). */
  data: Float64Array[];
}

export interface GapNotice {
  /** First missing sample index. */
  sample: number;
  /** Number of missing frames. */
  lost: number;
  reason: string;
  /** For lost = 0 (a replay starting its file again): the file's own index of the sample the seam restarts at. */
  restartsAt?: number;
}

export interface LinkNotice {
  state: 'lost' | 'back';
  /** Last sample index delivered before the change (sample time of the notice). */
  sample: number;
  detail: string;
}

/** Counters a source keeps about the bytes it decoded. */
export interface SourceCounters {
  bytes: number;
  frames: number;
  crcErrors: number;
  syncErrors: number;
  lostSamples: number;
  reconnects: number;
}

/** What a source calls; the pipeline implements it. Calls are synchronous and in sample order. */
export interface SourceSink {
  info(info: StreamInfo): void;
  block(block: SampleBlock): void;
  gap(gap: GapNotice): void;
  link(link: LinkNotice): void;
  /** The source has no more data (end of a non-looping replay, or stopped). */
  end(): void;
}

export interface Source {
  readonly kind: SourceKind;
  start(sink: SourceSink): Promise<void>;
  stop(): Promise<void>;
  counters(): SourceCounters;
}
