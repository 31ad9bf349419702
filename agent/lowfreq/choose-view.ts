// The low-frequency view on the agent's thread (--threads 1) or on worker threads (more): the same frames either way.
import { LiveLowFrequency, type LiveLowFrequencyOptions } from './live-low-frequency.ts';
import { WorkerLowFrequency } from './worker-low-frequency.ts';
import type { LowFrequencyView } from './view.ts';

export function chooseLowFrequencyView(o: {
  threads: number;
  mode: 'lossless' | 'bounded';
  view?: LiveLowFrequencyOptions;
  onFailure: (message: string) => void;
}): LowFrequencyView {
  if (o.threads <= 1) return new LiveLowFrequency(o.view);
  return new WorkerLowFrequency(o);
}
