// Default Welch segment for an offline report: 4096, or the largest power of two (≥ 64) that still gives at
// least 8 averages, so short files get a stable estimate rather than one noisy periodogram.
import { MIN_SEGMENT, welchStep } from '../../dsp/welch.ts';

export const DEFAULT_SEGMENT = 4096;
export const MIN_DEFAULT_AVERAGES = 8;

/** Segments scipy.signal.welch takes from `frames` samples: floor((frames − N) / step) + 1, step = N − floor(overlap·N). */
export function segmentCount(frames: number, segment: number, overlap: number): number {
  if (frames < segment) return 0;
  const step = welchStep(segment, overlap);
  return Math.floor((frames - segment) / step) + 1;
}

/**
 * The default segment for `frames` samples, or undefined when even the 64-sample minimum does not fit.
 * When no power of two gives 8 averages, the largest one that fits at all (fewer averages) is returned.
 */
export function defaultSegment(frames: number, overlap: number): number | undefined {
  for (let n = DEFAULT_SEGMENT; n >= MIN_SEGMENT; n /= 2) {
    if (segmentCount(frames, n, overlap) >= MIN_DEFAULT_AVERAGES) return n;
  }
  for (let n = DEFAULT_SEGMENT; n >= MIN_SEGMENT; n /= 2) if (frames >= n) return n;
  return undefined;
}
