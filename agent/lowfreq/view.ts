// What the monitor and the dashboard server need from the live low-frequency view, wherever it runs: on the
// agent's thread (LiveLowFrequency) or on worker threads (WorkerLowFrequency). Frames are a function of the samples
// only, so both give the same contexts and updates in the same order.
import type {
  LowFrequencyContext,
  LowFrequencyStatus,
  LowFrequencyUpdate,
} from '../../protocol/low-frequency-messages.ts';
import type { BlockFeed } from './live-low-frequency.ts';

export interface LowFrequencyView {
  attach(feed: BlockFeed): this;
  onContext(fn: (c: LowFrequencyContext) => void): () => void;
  onUpdate(fn: (u: LowFrequencyUpdate) => void): () => void;
  context(): LowFrequencyContext | null;
  latest(): LowFrequencyUpdate | null;
  status(): LowFrequencyStatus[];
  /** Delivers every frame still being computed, then releases the view's threads (none on the agent's thread). */
  close(): Promise<void>;
}
