// On the calling thread or on workers: workers only pay off with more than one thread and channel, and a segment
// filter (`accept`, which reads state of the reading thread) keeps everything on the calling thread.
import { LocalChannelSpectra, type ChannelEstimatorPlan, type ChannelSpectra } from './channel-spectra.ts';
import { WorkerChannelSpectra } from './worker-channel-spectra.ts';

export function chooseChannelSpectra(
  plan: ChannelEstimatorPlan,
  channels: number,
  threads: number,
  accept?: () => (first: number, last: number) => boolean,
): ChannelSpectra & { close?: () => Promise<void> } {
  if (threads > 1 && channels > 1 && !accept) return new WorkerChannelSpectra(plan, channels, threads);
  return new LocalChannelSpectra(plan, channels, accept);
}
