// What the detectors consume: the pipeline's spectrum snapshot (DEVELOPERS.md "Pipeline"), stated structurally so
// any object with these fields is accepted.
import type { SnapshotChannel, SpectrumSnapshot } from '../pipeline/types.ts';

/** The fields of a pipeline snapshot the rules read; tests and the detection bench pass plain objects of this shape. */
export type SnapshotLike = Pick<SpectrumSnapshot, 'sample' | 't' | 'wallTime' | 'settings' | 'frequencies'> &
  Partial<Pick<SpectrumSnapshot, 'averaging' | 'coherence'>> & {
    channels: (Pick<SnapshotChannel, 'name' | 'unit' | 'psd' | 'segmentsUsed' | 'equivalentAverages'> &
      Partial<Pick<SnapshotChannel, 'lastSegmentSample'>>)[];
  };

/** Asks the recorder for a pre/post capture around `triggerSample`; returns the file (relative to the data folder). */
export type CaptureRequester = (triggerSample: number, label: string) => string | undefined;

/** The short-window estimate the rules judge clears, settled levels and peaks on (dsp/detection/recent-spectrum.ts). */
export interface RecentView {
  psd: Float64Array;
  equivalentAverages: number;
  /** Samples the window spans back from the end of its newest segment. */
  spanSamples: number;
}
