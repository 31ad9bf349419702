// Typed wrapper over fft.js realTransform: plan once, caller-owned buffers, nothing allocated per call.
// fft.js writes only bins 0..N/2 of its interleaved complex output (the rest is the conjugate mirror, which
// we never need for a one-sided spectrum), so `transform` returns exactly those N/2+1 bins.
import FFT from 'fft.js';

export class RealFft {
  readonly size: number;
  /** size/2 + 1 one-sided bins. */
  readonly bins: number;
  private readonly plan: FFT;
  /** fft.js needs room for the whole interleaved complex result (2·size). */
  private readonly scratch: Float64Array;

  constructor(size: number) {
    if (!Number.isInteger(size) || size < 4 || (size & (size - 1)) !== 0) {
      throw new RangeError(`RealFft: size must be a power of two of at least 4, got ${size}`);
    }
    this.size = size;
    this.bins = size / 2 + 1;
    this.plan = new FFT(size);
    this.scratch = new Float64Array(2 * size);
  }

  /**
   * Forward DFT X[k] = Σ x[n]·e^(−2πikn/N) of `input` (length size) for k = 0..N/2, written interleaved
   * (re, im) into `out` (length ≥ size + 2). `out` and `input` must be distinct arrays.
   */
  transform(input: Float64Array, out: Float64Array): Float64Array {
    if (input.length !== this.size) {
      throw new RangeError(`RealFft.transform: input has ${input.length} samples, the plan is for ${this.size}`);
    }
    if (out.length < this.size + 2) {
      throw new RangeError(`RealFft.transform: out needs ${this.size + 2} values (N/2+1 complex), has ${out.length}`);
    }
    const scratch = this.scratch;
    this.plan.realTransform(scratch, input);
    const n = this.size + 2;
    for (let i = 0; i < n; i++) out[i] = scratch[i];
    return out;
  }

  /** |X[k]|² for k = 0..N/2 into `power` (length ≥ bins), without copying the complex result. */
  power(input: Float64Array, power: Float64Array): Float64Array {
    if (input.length !== this.size) {
      throw new RangeError(`RealFft.power: input has ${input.length} samples, the plan is for ${this.size}`);
    }
    if (power.length < this.bins) {
      throw new RangeError(`RealFft.power: power needs ${this.bins} values, has ${power.length}`);
    }
    const scratch = this.scratch;
    this.plan.realTransform(scratch, input);
    const bins = this.bins;
    for (let k = 0, j = 0; k < bins; k++, j += 2) {
      const re = scratch[j];
      const im = scratch[j + 1];
      power[k] = re * re + im * im;
    }
    return power;
  }
}
