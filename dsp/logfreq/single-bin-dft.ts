// A windowed DFT at one (generally non-integer) bin m of a segment of length L:
//   X(m) = Σ_n (x[n] − trend[n]) · w[n] · e^(−2πi·m·n/L).
// The kernel c[n] = w[n]·e^(−2πi·m·n/L) is built once per (window, m, L) by a rotating phasor (angle-addition
// recurrence, resynchronised from cos/sin every RESYNC samples so rounding cannot drift), then every segment
// costs two multiply-adds per sample. Mean and linear detrending are applied after the sum, exactly, through
// the kernel's moments: Σ(a + b·n)·c[n] = a·C0 + b·C1, as scipy.signal.detrend('constant'|'linear') would
// remove them from the segment first.

const RESYNC = 256;

export type SegmentDetrend = 'none' | 'mean' | 'linear';

export class SingleBinKernel {
  /** Capacity in samples. */
  readonly capacity: number;
  length = 0;
  bin = 0;
  readonly re: Float64Array;
  readonly im: Float64Array;
  /** C0 = Σ c[n], C1 = Σ n·c[n]. */
  c0re = 0;
  c0im = 0;
  c1re = 0;
  c1im = 0;
  /** Σ w², Σ w for the density and spectrum scalings. */
  sumSq = 0;
  sum = 0;

  constructor(capacity: number) {
    if (!Number.isInteger(capacity) || capacity < 2)
      throw new RangeError(`SingleBinKernel: capacity must be an integer ≥ 2, got ${capacity}`);
    this.capacity = capacity;
    this.re = new Float64Array(capacity);
    this.im = new Float64Array(capacity);
  }

  /** Prepares the kernel for window w (length L ≤ capacity) at bin m. */
  build(w: Float64Array, m: number): void {
    const len = w.length;
    if (len > this.capacity)
      throw new RangeError(`SingleBinKernel: window of ${len} exceeds capacity ${this.capacity}`);
    const re = this.re;
    const im = this.im;
    const dTheta = (2 * Math.PI * m) / len;
    const cr = Math.cos(dTheta);
    const sr = Math.sin(dTheta);
    let c = 1;
    let s = 0;
    let c0r = 0,
      c0i = 0,
      c1r = 0,
      c1i = 0,
      sq = 0,
      sm = 0;
    for (let n = 0; n < len; n++) {
      if (n % RESYNC === 0) {
        // Phase reduced mod L before scaling, so the resync itself is exact to rounding.
        const theta = (2 * Math.PI * ((m * n) % len)) / len;
        c = Math.cos(theta);
        s = Math.sin(theta);
      }
      const wn = w[n];
      const kr = wn * c;
      const ki = -wn * s;
      re[n] = kr;
      im[n] = ki;
      c0r += kr;
      c0i += ki;
      c1r += n * kr;
      c1i += n * ki;
      sq += wn * wn;
      sm += wn;
      const cNext = c * cr - s * sr;
      s = s * cr + c * sr;
      c = cNext;
    }
    this.length = len;
    this.bin = m;
    this.c0re = c0r;
    this.c0im = c0i;
    this.c1re = c1r;
    this.c1im = c1i;
    this.sumSq = sq;
    this.sum = sm;
  }

  /** |X(m)|² of x[start .. start+L) after the given detrend. */
  power(x: Float64Array, start: number, detrend: SegmentDetrend): number {
    const len = this.length;
    const re = this.re;
    const im = this.im;
    let ar = 0;
    let ai = 0;
    let tx = 0;
    let tnx = 0;
    if (detrend === 'linear') {
      for (let n = 0; n < len; n++) {
        const v = x[start + n];
        ar += v * re[n];
        ai += v * im[n];
        tx += v;
        tnx += n * v;
      }
    } else if (detrend === 'mean') {
      for (let n = 0; n < len; n++) {
        const v = x[start + n];
        ar += v * re[n];
        ai += v * im[n];
        tx += v;
      }
    } else {
      for (let n = 0; n < len; n++) {
        const v = x[start + n];
        ar += v * re[n];
        ai += v * im[n];
      }
    }
    return this.detrendedPower(ar, ai, tx, tnx, detrend);
  }

  /** Removes the fitted constant or line from raw sums A = Σx·c, Σx, Σn·x and returns |X|². */
  detrendedPower(ar: number, ai: number, tx: number, tnx: number, detrend: SegmentDetrend): number {
    const len = this.length;
    if (detrend === 'mean') {
      const a = tx / len;
      ar -= a * this.c0re;
      ai -= a * this.c0im;
    } else if (detrend === 'linear') {
      // Least-squares line a + b·n over n = 0..L−1.
      const s1 = (len * (len - 1)) / 2;
      const s2 = ((len - 1) * len * (2 * len - 1)) / 6;
      const b = (len * tnx - s1 * tx) / (len * s2 - s1 * s1);
      const a = (tx - b * s1) / len;
      ar -= a * this.c0re + b * this.c1re;
      ai -= a * this.c0im + b * this.c1im;
    }
    return ar * ar + ai * ai;
  }
}
