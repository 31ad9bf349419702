// Detrend and window one segment: out[n] = (x[n] − trend[n])·w[n]. fit() finds the trend; the Welch hot path
// folds the subtraction and the window into the FFT's load (RealFftPower.windowedPower), apply() is the plain form.
// 'mean' removes the sample mean (scipy.signal.detrend type='constant'); 'linear' removes the least-squares line
// over n = 0..N−1 (scipy type='linear'). With t = n − (N−1)/2 the fit decouples: slope = Σt·x / Σt², offset =
// mean(x), so no matrix solve is needed. The mean is summed in numpy's pairwise order so that a large offset
// cancels exactly as in scipy (the DC bin of an offset channel is otherwise off by an ulp of the offset).
export type DetrendMode = 'none' | 'mean' | 'linear';

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
  /** Trend of the last segment given to fit(): out[n] = (x[n] − mean − slope·(n − (N−1)/2))·w[n]. */
  mean = 0;
  slope = 0;

  constructor(window: Float64Array, mode: DetrendMode) {
    this.mode = validateDetrend(mode);
    this.window = window;
    this.length = window.length;
    const n = this.length;
    this.sumT2 = (n * (n * n - 1)) / 12;
  }

  /** Fits the trend of src[offset..offset+N) for the chosen mode (zero for 'none') into mean and slope. */
  fit(src: Float64Array, offset: number): void {
    const n = this.length;
    if (this.mode === 'none') {
      this.mean = 0;
      this.slope = 0;
      return;
    }
    const mean = pairwiseSum(src, offset, n) / n;
    this.mean = mean;
    if (this.mode === 'mean') {
      this.slope = 0;
      return;
    }
    const centre = (n - 1) / 2;
    let sxt = 0;
    for (let i = 0; i < n; i++) sxt += (src[offset + i] - mean) * (i - centre);
    this.slope = sxt / this.sumT2;
  }

  /** Writes the detrended, windowed copy of src[offset..offset+N) into out[0..N) (the unfused form). */
  apply(src: Float64Array, offset: number, out: Float64Array): void {
    this.fit(src, offset);
    const n = this.length;
    const w = this.window;
    const mean = this.mean;
    const slope = this.slope;
    const centre = (n - 1) / 2;
    for (let i = 0; i < n; i++) out[i] = (src[offset + i] - mean - slope * (i - centre)) * w[i];
  }
}

/**
 * Σ src[offset..offset+n) in the order numpy's pairwise summation uses for float64 (numpy
 * _core/src/umath/loops_utils.h.src, PW_BLOCKSIZE 128, 8-way unrolled): error O(ε·log n) instead of O(ε·n).
 */
export function pairwiseSum(src: Float64Array, offset: number, n: number): number {
  if (n < 8) {
    let s = 0;
    for (let i = 0; i < n; i++) s += src[offset + i];
    return s;
  }
  if (n <= 128) {
    let r0 = src[offset];
    let r1 = src[offset + 1];
    let r2 = src[offset + 2];
    let r3 = src[offset + 3];
    let r4 = src[offset + 4];
    let r5 = src[offset + 5];
    let r6 = src[offset + 6];
    let r7 = src[offset + 7];
    const blocks = n - (n % 8);
    let i = 8;
    for (; i < blocks; i += 8) {
      const j = offset + i;
      r0 += src[j];
      r1 += src[j + 1];
      r2 += src[j + 2];
      r3 += src[j + 3];
      r4 += src[j + 4];
      r5 += src[j + 5];
      r6 += src[j + 6];
      r7 += src[j + 7];
    }
    let s = r0 + r1 + (r2 + r3) + (r4 + r5 + (r6 + r7));
    for (; i < n; i++) s += src[offset + i];
    return s;
  }
  let half = Math.floor(n / 2);
  half -= half % 8;
  return pairwiseSum(src, offset, half) + pairwiseSum(src, offset + half, n - half);
}
