// |X[k]|², k = 0..N/2, of a real sequence of even length N through one complex FFT of length M = N/2:
// z[m] = y[2m] + i·y[2m+1], Z = DFT_M(z); then E[k] = (Z[k] + conj Z[M−k])/2 (DFT of the even samples),
// O[k] = (Z[k] − conj Z[M−k])/(2i) (odd samples) and X[k] = E[k] + e^(−2πik/N)·O[k] (standard "half-length"
// real FFT, e.g. Brigham, The FFT and its Applications, 1988, sec. 9-3). Half the work of a complex N-point FFT.
import { ComplexFft } from './complex-fft.ts';

export class RealFftPower {
  readonly size: number;
  readonly bins: number;
  private readonly fft: ComplexFft;
  private readonly re: Float64Array;
  private readonly im: Float64Array;
  /** Even-index source positions 2·bitrev[m] for the packing load. */
  private readonly load: Int32Array;
  /** The last window given to windowedPower, and its values in load order (even and odd samples). */
  private permutedFrom: Float64Array | null = null;
  private readonly windowEven: Float64Array;
  private readonly windowOdd: Float64Array;
  /** cos and sin of 2πk/N for k = 0..M. */
  private readonly cos: Float64Array;
  private readonly sin: Float64Array;

  constructor(size: number) {
    if (!Number.isInteger(size) || size < 8 || (size & (size - 1)) !== 0) {
      throw new RangeError(`RealFftPower: size must be a power of two of at least 8, got ${size}`);
    }
    this.size = size;
    this.bins = size / 2 + 1;
    const m = size / 2;
    this.fft = new ComplexFft(m);
    this.re = new Float64Array(m);
    this.im = new Float64Array(m);
    this.load = new Int32Array(m);
    for (let i = 0; i < m; i++) this.load[i] = 2 * this.fft.bitrev[i];
    this.windowEven = new Float64Array(m);
    this.windowOdd = new Float64Array(m);
    this.cos = new Float64Array(m + 1);
    this.sin = new Float64Array(m + 1);
    for (let k = 0; k <= m; k++) {
      const angle = (2 * Math.PI * k) / size;
      this.cos[k] = Math.cos(angle);
      this.sin[k] = Math.sin(angle);
    }
  }

  /** Writes |X[k]|² of y[0..N) into power[0..N/2]. Allocates nothing. */
  power(y: Float64Array, power: Float64Array): void {
    const m = this.size >> 1;
    const re = this.re;
    const im = this.im;
    const load = this.load;
    for (let i = 0; i < m; i++) {
      const j = load[i];
      re[i] = y[j];
      im[i] = y[j + 1];
    }
    this.fft.firstStage(re, im);
    this.finish(power, false);
  }

  /**
   * |X[k]|² of y[n] = (src[offset+n] − mean − slope·(n − (N−1)/2))·w[n], the detrended and windowed segment,
   * without materialising y: the packing load and the first FFT stage run in the same pass. mean = slope = 0
   * gives plain windowing with bit-identical values. With accumulate, |X[k]|² is added to power[k] instead of
   * written (a running sum without a second pass). With `spectrum`, the complex X[k] is written there too,
   * interleaved (re, im) in spectrum[0..N+2), from the same arithmetic (re² + im² is the power bit for bit).
   */
  windowedPower(
    src: Float64Array,
    offset: number,
    w: Float64Array,
    mean: number,
    slope: number,
    power: Float64Array,
    accumulate = false,
    spectrum?: Float64Array,
  ): void {
    const m = this.size >> 1;
    const re = this.re;
    const im = this.im;
    const load = this.load;
    const centre = (this.size - 1) / 2;
    if (w !== this.permutedFrom) this.permuteWindow(w);
    // The window in load order: sequential reads instead of a second bit-reversed gather.
    const we = this.windowEven;
    const wo = this.windowOdd;
    if (this.fft.firstRadix2) {
      for (let i = 0; i < m; i += 2) {
        const j0 = load[i];
        const j1 = load[i + 1];
        const ar = (src[offset + j0] - mean - slope * (j0 - centre)) * we[i];
        const ai = (src[offset + j0 + 1] - mean - slope * (j0 + 1 - centre)) * wo[i];
        const br = (src[offset + j1] - mean - slope * (j1 - centre)) * we[i + 1];
        const bi = (src[offset + j1 + 1] - mean - slope * (j1 + 1 - centre)) * wo[i + 1];
        re[i] = ar + br;
        im[i] = ai + bi;
        re[i + 1] = ar - br;
        im[i + 1] = ai - bi;
      }
    } else {
      for (let i = 0; i < m; i += 4) {
        const j0 = load[i];
        const j1 = load[i + 1];
        const j2 = load[i + 2];
        const j3 = load[i + 3];
        const ar = (src[offset + j0] - mean - slope * (j0 - centre)) * we[i];
        const ai = (src[offset + j0 + 1] - mean - slope * (j0 + 1 - centre)) * wo[i];
        const br = (src[offset + j1] - mean - slope * (j1 - centre)) * we[i + 1];
        const bi = (src[offset + j1 + 1] - mean - slope * (j1 + 1 - centre)) * wo[i + 1];
        const cr = (src[offset + j2] - mean - slope * (j2 - centre)) * we[i + 2];
        const ci = (src[offset + j2 + 1] - mean - slope * (j2 + 1 - centre)) * wo[i + 2];
        const dr = (src[offset + j3] - mean - slope * (j3 - centre)) * we[i + 3];
        const di = (src[offset + j3 + 1] - mean - slope * (j3 + 1 - centre)) * wo[i + 3];
        // Radix-4 butterfly with unit twiddles, as ComplexFft.firstStage.
        const t0r = ar + br;
        const t0i = ai + bi;
        const t1r = ar - br;
        const t1i = ai - bi;
        const t2r = cr + dr;
        const t2i = ci + di;
        const t3r = cr - dr;
        const t3i = ci - di;
        re[i] = t0r + t2r;
        im[i] = t0i + t2i;
        re[i + 2] = t0r - t2r;
        im[i + 2] = t0i - t2i;
        re[i + 1] = t1r + t3i;
        im[i + 1] = t1i - t3r;
        re[i + 3] = t1r - t3i;
        im[i + 3] = t1i + t3r;
      }
    }
    this.finish(power, accumulate, spectrum);
  }

  // Reorders a window into load order once per window array (a different array costs one O(N) pass).
  private permuteWindow(w: Float64Array): void {
    if (w.length !== this.size)
      throw new RangeError(`RealFftPower: window has ${w.length} values, the plan is for ${this.size}`);
    const load = this.load;
    for (let i = 0; i < load.length; i++) {
      this.windowEven[i] = w[load[i]];
      this.windowOdd[i] = w[load[i] + 1];
    }
    this.permutedFrom = w;
  }

  // Remaining FFT stages, then the even/odd split into one-sided |X[k]|².
  private finish(power: Float64Array, accumulate: boolean, spectrum?: Float64Array): void {
    const m = this.size >> 1;
    const re = this.re;
    const im = this.im;
    this.fft.laterStages(re, im);
    const cos = this.cos;
    const sin = this.sin;
    // k = 0 and k = M: E[0] = Re Z0, O[0] = Im Z0; X[0] = E+O, X[M] = E−O (both real).
    const dc = re[0] + im[0];
    const ny = re[0] - im[0];
    if (spectrum) {
      spectrum[0] = dc;
      spectrum[1] = 0;
      spectrum[2 * m] = ny;
      spectrum[2 * m + 1] = 0;
    }
    if (accumulate) {
      power[0] += dc * dc;
      power[m] += ny * ny;
    } else {
      power[0] = dc * dc;
      power[m] = ny * ny;
    }
    // Bins k and M−k share Z[k] and Z[M−k]: with E, O from the pair and u + iv = e^(−2πik/N)·O,
    // X[k] = (er + u) + i(ei + v) and X[M−k] = (er − u) + i(v − ei) (cos(π − θ) = −cos θ, sin(π − θ) = sin θ).
    const half = m >> 1;
    for (let k = 1; k < half; k++) {
      const ar = re[k];
      const ai = im[k];
      const br = re[m - k];
      const bi = im[m - k];
      const er = 0.5 * (ar + br);
      const ei = 0.5 * (ai - bi);
      const or = 0.5 * (ai + bi);
      const oi = -0.5 * (ar - br);
      const c = cos[k];
      const s = sin[k];
      const u = c * or + s * oi;
      const v = c * oi - s * or;
      const pr = er + u;
      const pi = ei + v;
      const qr = er - u;
      const qi = v - ei;
      if (spectrum) {
        spectrum[2 * k] = pr;
        spectrum[2 * k + 1] = pi;
        spectrum[2 * (m - k)] = qr;
        spectrum[2 * (m - k) + 1] = qi;
      }
      if (accumulate) {
        power[k] += pr * pr + pi * pi;
        power[m - k] += qr * qr + qi * qi;
      } else {
        power[k] = pr * pr + pi * pi;
        power[m - k] = qr * qr + qi * qi;
      }
    }
    // k = M/2 pairs with itself: X = Re Z − i·Im Z there (e^(−iπ/2) = −i).
    const hr = re[half];
    const hi = im[half];
    if (spectrum) {
      spectrum[2 * half] = hr;
      spectrum[2 * half + 1] = -hi;
    }
    if (accumulate) power[half] += hr * hr + hi * hi;
    else power[half] = hr * hr + hi * hi;
  }
}
