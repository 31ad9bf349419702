// Per-channel Welch estimates of a whole recording, fed block by block: on the calling thread or spread over
// worker threads by channel. Each channel's estimator sees the same samples in the same blocks either way, so the
// results are bit-identical (the estimate does not depend on the thread it runs on).
import { WholeMedianAverager } from '../../dsp/averaging.ts';
import { WelchEstimator } from '../../dsp/welch.ts';
import type { DetrendMode } from '../../dsp/detrend.ts';

/** What a worker needs to build the same estimator as the calling thread. */
export interface ChannelEstimatorPlan {
  sampleRate: number;
  segment: number;
  window: string;
  overlap: number;
  detrend: DetrendMode;
  firstSample: number;
  /** Segments planned, when the median of all segments is taken (else the mean). */
  medianOf?: number;
}

export interface ChannelResult {
  psd: Float64Array;
  segmentsUsed: number;
  segmentsExcluded: number;
  equivalentAverages: number;
}

export interface ChannelSpectra {
  /** Analyses data[c][0..frames) of every channel; resolves when the samples may be overwritten. */
  push(data: readonly Float64Array[], frames: number): void | Promise<void>;
  /** The estimates, in channel order; the spectra cannot be fed afterwards. */
  finish(): Promise<ChannelResult[]>;
}

export function makeEstimator(
  plan: ChannelEstimatorPlan,
  accept?: (first: number, last: number) => boolean,
): WelchEstimator {
  return new WelchEstimator({
    sampleRate: plan.sampleRate,
    segment: plan.segment,
    window: plan.window,
    overlap: plan.overlap,
    detrend: plan.detrend,
    firstSample: plan.firstSample,
    // With the median averager injected, the spec only picks the equal-weight equivalent-averages formula.
    averaging: { mode: 'mean' },
    averager: plan.medianOf !== undefined ? new WholeMedianAverager(plan.segment / 2 + 1, plan.medianOf) : undefined,
    accept,
  });
}

export function resultOf(est: WelchEstimator): ChannelResult {
  return {
    psd: est.psd(),
    segmentsUsed: est.segmentsUsed,
    segmentsExcluded: est.segmentsExcluded,
    equivalentAverages: est.equivalentAverages(),
  };
}

/** Every channel on the calling thread. */
export class LocalChannelSpectra implements ChannelSpectra {
  readonly estimators: WelchEstimator[];
  constructor(plan: ChannelEstimatorPlan, channels: number, accept?: () => (first: number, last: number) => boolean) {
    this.estimators = Array.from({ length: channels }, () => makeEstimator(plan, accept?.()));
  }
  push(data: readonly Float64Array[], frames: number): void {
    for (let c = 0; c < this.estimators.length; c++) this.estimators[c].push(data[c], 0, frames);
  }
  finish(): Promise<ChannelResult[]> {
    return Promise.resolve(this.estimators.map(resultOf));
  }
}
