// Messages between the reading thread and a channel worker (agent/workers/channel-worker.ts).
import type { ChannelEstimatorPlan, ChannelResult } from './channel-spectra.ts';

export interface ChannelWorkerData {
  plan: ChannelEstimatorPlan;
  /** Channels this worker owns. */
  channels: number[];
}

/** samples[0..frames) of one channel; the buffer is transferred and comes back in a 'free' message. */
export type ToChannelWorker =
  { kind: 'block'; channel: number; frames: number; samples: Float64Array } | { kind: 'finish' };

export type FromChannelWorker =
  | { kind: 'free'; channel: number; samples: Float64Array }
  | { kind: 'result'; results: (ChannelResult & { channel: number })[] };
