// Streaming cascade of second-order sections in transposed direct form II, the same recursion as
// scipy.signal.sosfilt: y = b0·x + z1; z1 = b1·x − a1·y + z2; z2 = b2·x − a2·y.
import type { SosFilter } from './butterworth.ts';
import { steadyStateInto } from './steady-state.ts';

export class SosCascade {
  readonly sections: number;
  private readonly filter: SosFilter;
  private readonly coeffs: Float64Array;
  /** Two state values per section. */
  private readonly state: Float64Array;

  constructor(filter: SosFilter) {
    if (!Number.isInteger(filter.sections) || filter.sections < 1 || filter.sos.length !== 6 * filter.sections) {
      throw new RangeError(
        `SosCascade: need 6 coefficients per section, got ${filter.sos.length} for ${filter.sections}`,
      );
    }
    for (let s = 0; s < filter.sections; s++) {
      if (filter.sos[6 * s + 3] !== 1) throw new RangeError(`SosCascade: section ${s} must have a0 = 1`);
    }
    this.sections = filter.sections;
    this.coeffs = Float64Array.from(filter.sos);
    this.filter = { sections: filter.sections, sos: this.coeffs };
    this.state = new Float64Array(2 * filter.sections);
  }

  /** Filters input[start..end) into output[outStart..). Input and output may be the same array. */
  process(input: Float64Array, output: Float64Array, start = 0, end = input.length, outStart = start): void {
    for (let i = start, o = outStart; i < end; i++, o++) {
      const x = this.step(input[i]);
      output[o] = x;
    }
  }

  /** One sample in, one out (for per-sample loops that interleave other work). */
  step(x: number): number {
    const c = this.coeffs;
    const st = this.state;
    for (let s = 0; s < this.sections; s++) {
      const k = 6 * s;
      const j = 2 * s;
      const y = c[k] * x + st[j];
      st[j] = c[k + 1] * x - c[k + 4] * y + st[j + 1];
      st[j + 1] = c[k + 2] * x - c[k + 5] * y;
      x = y;
    }
    return x;
  }

  /** Zero state, as scipy.signal.sosfilt starts without zi. */
  reset(): void {
    this.state.fill(0);
  }

  /** Copies the state (z1, z2 per section, scipy's zi layout) into out. */
  copyState(out: Float64Array): Float64Array {
    out.set(this.state);
    return out;
  }

  /** State of a constant input `x0` held forever, as scipy.signal.sosfilt_zi(sos)·x0. */
  settleTo(x0: number): void {
    steadyStateInto(this.filter, x0, this.state);
  }
}
