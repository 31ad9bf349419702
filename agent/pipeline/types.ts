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

/** Cross-spectrum and coherence of one channel pair, averaged like the densities (dsp/live-cross-spectra.ts). */
export interface SnapshotCoherence {
  a: string;
  b: string;
  /** Magnitude-squared coherence per bin, 0..1 (scipy.signal.coherence conventions). A fresh array. */
  coherence: Float64Array;
  /** Cross-spectral density conj(A)·B, unit_a·unit_b/Hz (scipy.signal.csd one-sided). Fresh arrays. */
  csdRe: Float64Array;
  csdIm: Float64Array;
  segmentsUsed: number;
  /** Overlap-corrected equivalent independent averages: the n of the coherence's significance bound. */
  equivalentAverages: number;
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
  /** Channel pairs' coherence, when the pipeline computes cross-spectra (2 or more channels). */
  coherence?: SnapshotCoherence[];
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

/** A run of frames holding a non-finite value (NaN, ±Inf, float32 overflow): excluded from everything like a gap. */
export interface NonFiniteNotice {
  /** First excluded sample index. */
  sample: number;
  /** Frames excluded. */
  frames: number;
  /** Channels with a non-finite value in the run. */
  channels: string[];
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

/** What a segment observer is told when an analysis (re)starts: the grid of the estimates that follow. */
export interface AnalysisGrid {
  settings: AnalysisSettings;
  frequencies: Float64Array;
  binHz: number;
  /** Samples between snapshot instants. */
  snapshotInterval: number;
  channels: readonly { name: string; unit: string }[];
  firstSample: number;
}

/**
 * Told of every Welch segment of every channel as it completes, with the segment's own one-sided density
 * (unit²/Hz, a reused buffer valid only during the call) and the absolute index of its last sample. The
 * per-segment values let a consumer average exactly the segments that end inside an interval.
 */
export interface SegmentObserver {
  onAnalysis(grid: AnalysisGrid): void;
  onSegment(channel: number, density: Float64Array, lastSample: number): void;
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
  nonfinite: NonFiniteNotice;
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
  /** Frames excluded because they held a non-finite value, and the first sample of the latest such run (-1: none). */
  nonfiniteFrames: number;
  lastNonfiniteSample: number;
  events: number;
  queueDepth: number;
  queueCapacity: number;
}
