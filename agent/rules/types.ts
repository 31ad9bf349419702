// What the detectors consume: the pipeline's spectrum snapshot (DEVELOPERS.md "Pipeline"), stated structurally so
// any object with these fields is accepted.
import type { AnalysisSettings, AveragingSpec } from '../../protocol/settings.ts';

export interface SnapshotChannel {
  name: string;
  unit: string;
  psd: Float64Array;
  segmentsUsed: number;
  equivalentAverages: number;
  /** Absolute index of the last sample of the newest segment (the overload hold counts segments after a clip). */
  lastSegmentSample?: number;
}

export interface SnapshotLike {
  sample: number;
  t: number;
  wallTime: string;
  settings: AnalysisSettings;
  averaging?: AveragingSpec;
  frequencies: Float64Array;
  channels: SnapshotChannel[];
}

/** Asks the recorder for a pre/post capture around `triggerSample`; returns the file (relative to the data folder). */
export type CaptureRequester = (triggerSample: number, label: string) => string | undefined;

/** The short-window estimate the rules judge clears, settled levels and peaks on (dsp/detection/recent-spectrum.ts). */
export interface RecentView {
  psd: Float64Array;
  equivalentAverages: number;
  /** Samples the window spans back from the end of its newest segment. */
  spanSamples: number;
}
