// Messages between WorkerLowFrequency (agent/lowfreq/worker-low-frequency.ts) and a low-frequency worker.
import type { GapNotice } from '../../protocol/stream.ts';
import type {
  LowFrequencyContext,
  LowFrequencyStatus,
  LowFrequencyUpdate,
} from '../../protocol/low-frequency-messages.ts';
import type { LiveLowFrequencyOptions } from '../lowfreq/live-low-frequency.ts';
import type { SharedBlockSlots } from './block-slots.ts';

export interface LowFrequencyWorkerData {
  view: LiveLowFrequencyOptions;
  slots: SharedBlockSlots;
}

/** The stream's channels this worker owns (names, units), or a block in slot `slot`, or a gap, or the end. */
export type ToLowFrequencyWorker =
  | { kind: 'info'; sampleRate: number; firstSample: number; channels: { name: string; unit: string }[] }
  | { kind: 'block'; slot: number; firstSample: number; frames: number }
  | { kind: 'gap'; gap: GapNotice }
  | { kind: 'finish' };

/** Frames in the order the view made them; the status after each message; 'done' after 'finish'. */
export type FromLowFrequencyWorker =
  | { kind: 'context'; context: LowFrequencyContext }
  | { kind: 'update'; update: LowFrequencyUpdate }
  | { kind: 'status'; status: LowFrequencyStatus[] }
  | { kind: 'done' }
  | { kind: 'failed'; message: string };
