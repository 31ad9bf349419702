// Detrend and window one segment in a single pass: out[n] = (x[n] − trend[n])·w[n].
// 'mean' removes the sample mean (scipy.signal.detrend type='constant'); 'linear' removes the least-squares line
// over n = 0..N−1 (scipy type='linear'). With t = n − (N−1)/2 the fit decouples: slope = Σt·x / Σt², offset =
// mean(x), so no matrix solve is needed.
import type { DetrendMode } from '../agent/core/settings.ts';

export const DETREND_MODES: readonly DetrendMode[] = ['none', 'mean', 'linear'];

export function validateDetrend(mode: string): DetrendMode {
  if (!(DETREND_MODES as readonly string[]).includes(mode)) {
    throw new RangeError(`detrend "${mode}" is unknown: choose ${DETREND_MODES.join(', ')}`);
  }
  return mode as DetrendMode;
}

/** Plans the fused detrend × window for one segment length. */
export class SegmentConditioner {
  readonly length: number;
  readonly mode: DetrendMode;
  private readonly window: Float64Array;
  /** Σ t² with t = n − (N−1)/2, i.e. N(N²−1)/12. */
  private readonly sumT2: number;

  constructor(window: Float64Array, mode: DetrendMode) {
    this.mode = validateDetrend(mode);
    this.window = window;
    this.length = window.length;
    const n = this.length;
    this.sumT2 = (n * (n * n - 1)) / 12;
  }

  /** Writes the detrended, windowed copy of src[offset..offset+N) into out[0..N). */
  apply(src: Float64Array, offset: number, out: Float64Array): void {
    const n = this.length;
    const w = this.window;
    if (this.mode === 'none') {
      for (let i = 0; i < n; i++) out[i] = src[offset + i] * w[i];
      return;
    }
    let sum = 0;
    for (let i = 0; i < n; i++) sum += src[offset + i];
    const mean = sum / n;
    if (this.mode === 'mean') {
      for (let i = 0; i < n; i++) out[i] = (src[offset + i] - mean) * w[i];
      return;
    }
    const centre = (n - 1) / 2;
    let sxt = 0;
    for (let i = 0; i < n; i++) sxt += (src[offset + i] - mean) * (i - centre);
    const slope = sxt / this.sumT2;
    for (let i = 0; i < n; i++) out[i] = (src[offset + i] - mean - slope * (i - centre)) * w[i];
  }
}
