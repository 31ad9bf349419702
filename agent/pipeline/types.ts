// What the pipeline hands to its subscribers and detectors. Time is sample time: every item carries the index of
// a sample and t = sample / sampleRate; wallTime is a label derived from the stream's start wall time.
import type { FloorlineEvent } from '../../protocol/events.ts';
import type { AnalysisSettings, AveragingSpec } from '../../protocol/settings.ts';
import type { GapNotice, LinkNotice, StreamInfo } from '../../protocol/stream.ts';

/** One conditioned block in channel units (volts for a calibrated board). Arrays (length ≥ frames) are owned by the pipeline and
 * reused after the 'block' callbacks return: copy what you keep. */
export interface CalibratedBlock {
  firstSample: number;
  frames: number;
  data: Float64Array[];
}

export interface SnapshotChannel {
  name: string;
  unit: string;
  /** One-sided density, unit²/Hz (scipy.signal.welch 'density' conventions). A fresh array per snapshot. */
  psd: Float64Array;
  segmentsUsed: number;
  segmentsTotal: number;
  equivalentAverages: number;
  /** Absolute index of the last sample of the newest segment in this estimate. */
  lastSegmentSample: number;
}

export interface SpectrumSnapshot {
  /** Snapshot instant: the estimate includes every segment that ends at or before this sample. */
  sample: number;
  t: number;
  wallTime: string;
  /** Counts snapshots since the pipeline started (0, 1, 2 …). */
  sequence: number;
  settings: AnalysisSettings;
  averaging: AveragingSpec;
  frequencies: Float64Array;
  binHz: number;
  nenbw: number;
  enbwHz: number;
  channels: SnapshotChannel[];
}

/** Samples of one channel within 0.1 % of full scale, found in one block. */
export interface ClipNotice {
  channel: string;
  channelIndex: number;
  firstSample: number;
  lastSample: number;
  count: number;
  /** Largest |raw| seen in the block, counts; compare with fullScaleCounts. */
  peakCounts: number;
  fullScaleCounts: number;
}

/** Whole blocks dropped because analysis fell behind the source. */
export interface OverrunNotice {
  /** First dropped sample index. */
  sample: number;
  lost: number;
  droppedBlocks: number;
}

/** The hook for agent/rules: each call returns the events it raises or clears (possibly none). */
export interface Detector {
  onInfo?(info: StreamInfo): void;
  onSnapshot(snapshot: SpectrumSnapshot): FloorlineEvent[];
  onGap?(gap: GapNotice): FloorlineEvent[];
  onLink?(link: LinkNotice): FloorlineEvent[];
  onClip?(clip: ClipNotice): FloorlineEvent[];
  onOverrun?(overrun: OverrunNotice): FloorlineEvent[];
}

export interface PipelineEvents {
  info: StreamInfo;
  block: CalibratedBlock;
  snapshot: SpectrumSnapshot;
  event: FloorlineEvent;
  gap: GapNotice;
  link: LinkNotice;
  clip: ClipNotice;
  overrun: OverrunNotice;
  end: { sample: number };
}

export interface PipelineCounters {
  blocks: number;
  samples: number;
  /** Index of the last sample processed, -1 before the first. */
  lastSample: number;
  snapshots: number;
  gaps: number;
  lostSamples: number;
  droppedBlocks: number;
  droppedSamples: number;
  clippedSamples: number[];
  events: number;
  queueDepth: number;
  queueCapacity: number;
}
