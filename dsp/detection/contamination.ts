// How much of an averaged spectrum still comes from segments that held clipped samples. The weight returned is
// that of the newest contaminated segment now, relative to the weight it entered the average with:
//   exponential (est += α·(P − est), α = 1 − exp(−hop/τ)): each later segment scales it by (1 − α), so
//     w = (1 − α)^n = exp(−n·hop/τ) after n newer segments (the impulse response of a one-pole filter);
//   mean over N segments: it entered as 1/(N − n) and is now 1/N, so w = (N − n)/N;
//   rolling / median over K: w = 1 while it is among the last K segments, 0 once n ≥ K;
//   max hold: w = 1 until the average restarts.
// An average restarted after it (a replay loop seam, a reconfiguration) holds n ≥ N newer segments only: w = 0.
import type { AveragingSpec } from '../averaging.ts';

/** Spectral alarms on a channel stay held while the contaminated weight exceeds this (−20 dB). */
export const CONTAMINATION_HOLD_WEIGHT = 0.01;

/**
 * Segments that end after the contaminated ones: segments end every `step` samples, the newest at
 * `lastSegmentSample`; a segment ending at or after `lastClipped + segment` starts after the last clipped sample.
 */
export function segmentsAfter(lastSegmentSample: number, lastClipped: number, segment: number, step: number): number {
  const clean = lastClipped + segment;
  return lastSegmentSample < clean ? 0 : Math.floor((lastSegmentSample - clean) / step) + 1;
}

/** Relative weight (0..1) of the newest contaminated segment after `newer` segments, with `used` in the average. */
export function contaminationWeight(spec: AveragingSpec, newer: number, used: number, hopSeconds: number): number {
  if (newer >= used) return 0;
  switch (spec.mode) {
    case 'exponential':
      return Math.exp((-newer * hopSeconds) / spec.tauSeconds);
    case 'mean':
      return (used - newer) / used;
    case 'rolling':
    case 'median':
      return newer >= spec.count ? 0 : 1;
    case 'max':
      return 1;
  }
}
