// In-place complex FFT for power-of-two sizes, split real/imaginary Float64Arrays, radix-4 decimation in time
// (one radix-2 stage first when log2 M is odd). Plan once (bit-reversal and per-stage twiddles), execute many.
//
// After bit reversal a block of length L holds the DFTs of the four interleaved subsequences x[4j], x[4j+2],
// x[4j+1], x[4j+3] (each L/4 long). With W = e^(−2πi/L), a = A[k], b = W^2k·B[k], c = W^k·C[k], d = W^3k·D[k]:
//   X[k] = (a+b) + (c+d),  X[k+L/2] = (a+b) − (c+d),  X[k+L/4] = (a−b) − i(c−d),  X[k+3L/4] = (a−b) + i(c−d).

export class ComplexFft {
  readonly size: number;
  /** bitrev[i] = index whose bits reversed give i (log2(size) bits). */
  readonly bitrev: Int32Array;
  /** Per radix-4 stage, for k = 0..L/4−1: cos, sin of 2πk/L, 2·2πk/L, 3·2πk/L (forward sign applied in code). */
  private readonly twiddles: Float64Array;
  private readonly stageLengths: Int32Array;
  private readonly stageOffsets: Int32Array;
  /** True when log2(size) is odd: the first stage is radix-2 (L = 2), otherwise radix-4 (L = 4). */
  readonly firstRadix2: boolean;

  constructor(size: number) {
    if (!Number.isInteger(size) || size < 4 || (size & (size - 1)) !== 0) {
      throw new RangeError(`ComplexFft: size must be a power of two of at least 4, got ${size}`);
    }
    this.size = size;
    const bits = Math.round(Math.log2(size));
    this.bitrev = new Int32Array(size);
    for (let i = 0; i < size; i++) {
      let r = 0;
      for (let b = 0; b < bits; b++) r |= ((i >> b) & 1) << (bits - 1 - b);
      this.bitrev[i] = r;
    }
    this.firstRadix2 = bits % 2 === 1;
    const lengths: number[] = [];
    for (let len = this.firstRadix2 ? 8 : 4; len <= size; len *= 4) lengths.push(len);
    this.stageLengths = Int32Array.from(lengths);
    this.stageOffsets = new Int32Array(lengths.length);
    let total = 0;
    lengths.forEach((len, s) => {
      this.stageOffsets[s] = total;
      total += (len / 4) * 6;
    });
    this.twiddles = new Float64Array(total);
    lengths.forEach((len, s) => {
      const base = this.stageOffsets[s];
      for (let k = 0; k < len / 4; k++) {
        for (let m = 1; m <= 3; m++) {
          // Reduce m·k mod L before scaling so the angle is as exact as the index.
          const angle = (2 * Math.PI * ((m * k) % len)) / len;
          this.twiddles[base + 6 * k + 2 * (m - 1)] = Math.cos(angle);
          this.twiddles[base + 6 * k + 2 * (m - 1) + 1] = Math.sin(angle);
        }
      }
    });
  }

  /**
   * Forward transform X[k] = Σ x[n]·e^(−2πikn/M) in place on data already in bit-reversed order
   * (re[i] = x_re[bitrev[i]], im[i] = x_im[bitrev[i]]).
   */
  transformBitReversed(re: Float64Array, im: Float64Array): void {
    this.firstStage(re, im);
    this.laterStages(re, im);
  }

  /** The twiddle-free first stage (L = 2 or 4); callers that fuse it into their load skip it. */
  firstStage(re: Float64Array, im: Float64Array): void {
    const n = this.size;
    if (this.firstRadix2) {
      for (let i = 0; i < n; i += 2) {
        const ar = re[i];
        const ai = im[i];
        const br = re[i + 1];
        const bi = im[i + 1];
        re[i] = ar + br;
        im[i] = ai + bi;
        re[i + 1] = ar - br;
        im[i + 1] = ai - bi;
      }
    } else {
      // L = 4: all twiddles are 1.
      for (let i = 0; i < n; i += 4) {
        const ar = re[i];
        const ai = im[i];
        const br = re[i + 1];
        const bi = im[i + 1];
        const cr = re[i + 2];
        const ci = im[i + 2];
        const dr = re[i + 3];
        const di = im[i + 3];
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
        // (a−b) − i(c−d)
        re[i + 1] = t1r + t3i;
        im[i + 1] = t1i - t3r;
        // (a−b) + i(c−d)
        re[i + 3] = t1r - t3i;
        im[i + 3] = t1i + t3r;
      }
    }
  }

  /** Every radix-4 stage with twiddles (L ≥ 8), after the first stage. */
  laterStages(re: Float64Array, im: Float64Array): void {
    const n = this.size;
    const tw = this.twiddles;
    const lengths = this.stageLengths;
    const offsets = this.stageOffsets;
    for (let s = lengths[0] === 4 ? 1 : 0; s < lengths.length; s++) {
      const len = lengths[s];
      const q = len >> 2;
      const base = offsets[s];
      for (let k = 0; k < q; k++) {
        const t = base + 6 * k;
        // Forward transform: W^m = cos − i·sin.
        const w1r = tw[t];
        const w1i = -tw[t + 1];
        const w2r = tw[t + 2];
        const w2i = -tw[t + 3];
        const w3r = tw[t + 4];
        const w3i = -tw[t + 5];
        for (let blk = k; blk < n; blk += len) {
          const ia = blk;
          const ib = blk + q;
          const ic = ib + q;
          const id = ic + q;
          const ar = re[ia];
          const ai = im[ia];
          const xbr = re[ib];
          const xbi = im[ib];
          const xcr = re[ic];
          const xci = im[ic];
          const xdr = re[id];
          const xdi = im[id];
          // Memory order is A, B(x[4j+2]), C(x[4j+1]), D(x[4j+3]): B takes W^2k, C takes W^k, D takes W^3k.
          const br = xbr * w2r - xbi * w2i;
          const bi = xbr * w2i + xbi * w2r;
          const cr = xcr * w1r - xci * w1i;
          const ci = xcr * w1i + xci * w1r;
          const dr = xdr * w3r - xdi * w3i;
          const di = xdr * w3i + xdi * w3r;
          const t0r = ar + br;
          const t0i = ai + bi;
          const t1r = ar - br;
          const t1i = ai - bi;
          const t2r = cr + dr;
          const t2i = ci + di;
          const t3r = cr - dr;
          const t3i = ci - di;
          re[ia] = t0r + t2r;
          im[ia] = t0i + t2i;
          re[ic] = t0r - t2r;
          im[ic] = t0i - t2i;
          re[ib] = t1r + t3i;
          im[ib] = t1i - t3r;
          re[id] = t1r - t3i;
          im[id] = t1i + t3r;
        }
      }
    }
  }
}
