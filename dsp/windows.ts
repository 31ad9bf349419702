// Spectral windows in periodic ("DFT-even") form with the figures a calibrated reading needs.
// Coefficients and figures of merit: G. Heinzel, A. Rüdiger, R. Schilling, "Spectrum and spectral density
// estimation by the Discrete Fourier transform (DFT), including a comprehensive list of window functions and
// some new flat-top windows", Max-Planck-Institut für Gravitationsphysik, 2002 (appendix C).

export const WINDOW_NAMES = [
  'rect',
  'hann',
  'hamming',
  'blackman-harris',
  'nuttall',
  'hft95',
  'hft90d',
  'hft116d',
  'kaiser:ALPHA',
] as const;

export interface WindowInfo {
  /** Canonical spec, e.g. "hann", "kaiser:3". */
  readonly name: string;
  readonly length: number;
  readonly values: Float64Array;
  /** Σw/N (Heinzel 2002 sec. 9: S1/N). */
  readonly coherentGain: number;
  /** Normalised equivalent noise bandwidth N·Σw²/(Σw)², in bins (Heinzel 2002 sec. 9). */
  readonly nenbw: number;
  /** Equivalent noise bandwidth in Hz: nenbw·fs/N (Heinzel 2002 sec. 9). */
  enbwHz(sampleRate: number): number;
  /** Heinzel's recommended overlap ROV, a fraction in [0, 1). */
  readonly recommendedOverlap: number;
  /** Distance from the centre of the main lobe to its first zero, in bins. */
  readonly mainLobeHalfWidth: number;
}

interface CosineSumDef {
  kind: 'cosine';
  /** c_k in w[n] = Σ (−1)^k c_k cos(2πkn/N), Heinzel's sign convention. */
  coefficients: readonly number[];
  /** ROV from Heinzel's appendix C (percent / 100). */
  overlap: number;
}

// Heinzel 2002 appendix C (rect, Hanning, Hamming, Blackman-Harris 92 dB, Nuttall4c, and the flat-tops HFT95,
// HFT90D, HFT116D). The first zero of a cosine sum's main lobe is at as many bins
// as it has coefficients (rect 1, Hann 2, four-term 4...).
const COSINE_SUMS: Record<string, CosineSumDef> = {
  rect: { kind: 'cosine', coefficients: [1], overlap: 0 },
  hann: { kind: 'cosine', coefficients: [0.5, 0.5], overlap: 0.5 },
  hamming: { kind: 'cosine', coefficients: [0.54, 0.46], overlap: 0.5 },
  'blackman-harris': { kind: 'cosine', coefficients: [0.35875, 0.48829, 0.14128, 0.01168], overlap: 0.661 },
  nuttall: { kind: 'cosine', coefficients: [0.3635819, 0.4891775, 0.1365995, 0.0106411], overlap: 0.656 },
  hft95: { kind: 'cosine', coefficients: [1, 1.9383379, 1.3045202, 0.402827, 0.0350665], overlap: 0.756 },
  hft90d: { kind: 'cosine', coefficients: [1, 1.942604, 1.340318, 0.440811, 0.043097], overlap: 0.76 },
  hft116d: {
    kind: 'cosine',
    coefficients: [1, 1.9575375, 1.4780705, 0.6367431, 0.1228389, 0.0066288],
    overlap: 0.782,
  },
};

const KAISER_MAX_ALPHA = 20;

/** Validates a window spec and returns its canonical form ("Hann" → "hann", "kaiser:3.0" → "kaiser:3"). */
export function parseWindowName(spec: string): string {
  const s = String(spec).trim().toLowerCase();
  if (Object.hasOwn(COSINE_SUMS, s)) return s;
  if (s.startsWith('kaiser:')) {
    const text = s.slice('kaiser:'.length);
    const alpha = text === '' ? NaN : Number(text);
    if (!Number.isFinite(alpha) || alpha <= 0 || alpha > KAISER_MAX_ALPHA) {
      throw new RangeError(
        `window "${spec}": kaiser needs Heinzel's alpha as a number in (0, ${KAISER_MAX_ALPHA}], e.g. kaiser:3`,
      );
    }
    return `kaiser:${alpha}`;
  }
  throw new RangeError(`unknown window "${spec}": choose one of ${WINDOW_NAMES.join(', ')}`);
}

/**
 * Half-width of the window's main lobe in bins, from its definition alone (no window is built): the first zero of
 * a K-term cosine sum sits at K bins; of the Kaiser kernel at sqrt(1 + α²) bins (β = πα).
 */
export function windowMainLobeHalfWidth(spec: string): number {
  const name = parseWindowName(spec);
  if (name.startsWith('kaiser:')) {
    const alpha = Number(name.slice('kaiser:'.length));
    return Math.sqrt(1 + alpha * alpha);
  }
  return COSINE_SUMS[name].coefficients.length;
}

/** Builds a periodic window of the given length with its gains. Allocates; call once per configuration. */
export function makeWindow(spec: string, length: number): WindowInfo {
  const name = parseWindowName(spec);
  if (!Number.isInteger(length) || length < 2) {
    throw new RangeError(`window length must be an integer of at least 2, got ${length}`);
  }
  let values: Float64Array;
  let recommendedOverlap: number;
  if (name.startsWith('kaiser:')) {
    const alpha = Number(name.slice('kaiser:'.length));
    values = kaiserValues(alpha, length);
    recommendedOverlap = kaiserOverlap(alpha);
  } else {
    const def = COSINE_SUMS[name];
    values = cosineSumValues(def.coefficients, length);
    recommendedOverlap = def.overlap;
  }
  const mainLobeHalfWidth = windowMainLobeHalfWidth(name);
  let sum = 0;
  let sumSq = 0;
  for (let i = 0; i < length; i++) {
    const w = values[i];
    sum += w;
    sumSq += w * w;
  }
  const nenbw = (length * sumSq) / (sum * sum);
  return {
    name,
    length,
    values,
    coherentGain: sum / length,
    nenbw,
    enbwHz: (sampleRate: number) => (nenbw * sampleRate) / length,
    recommendedOverlap,
    mainLobeHalfWidth,
  };
}

/** w[n] = Σ (−1)^k c_k cos(2πkn/N), n = 0..N−1 (periodic). The phase k·n is reduced mod N before scaling. */
export function cosineSumValues(coefficients: readonly number[], length: number): Float64Array {
  const out = new Float64Array(length);
  const twoPiOverN = (2 * Math.PI) / length;
  for (let n = 0; n < length; n++) {
    let w = coefficients[0];
    for (let k = 1; k < coefficients.length; k++) {
      const phase = (k * n) % length;
      const sign = k % 2 === 1 ? -1 : 1;
      w += sign * coefficients[k] * Math.cos(twoPiOverN * phase);
    }
    out[n] = w;
  }
  return out;
}

/** Periodic Kaiser window, β = πα: w[n] = I0(β·sqrt(1 − (2n/N − 1)²)) / I0(β) (Heinzel appendix C, Kaiser). */
export function kaiserValues(alpha: number, length: number): Float64Array {
  const beta = Math.PI * alpha;
  const out = new Float64Array(length);
  const norm = besselI0(beta);
  for (let n = 0; n < length; n++) {
    const r = (2 * n) / length - 1;
    out[n] = besselI0(beta * Math.sqrt(Math.max(0, 1 - r * r))) / norm;
  }
  return out;
}

/** Modified Bessel function of the first kind, order 0, by its power series Σ ((x/2)^k / k!)². */
export function besselI0(x: number): number {
  const h = (x * x) / 4;
  let term = 1;
  let sum = 1;
  for (let k = 1; k < 500; k++) {
    term *= h / (k * k);
    sum += term;
    if (term < sum * 1e-17) break;
  }
  return sum;
}

const kaiserOverlapCache = new Map<number, number>();

// Heinzel gives no closed form for ROV; his tabulated ROVs are the overlap r maximising AF(r) − OC(r)
// (amplitude flatness minus overlap correlation, Heinzel section 10). The same rule reproduces every tabulated
// ROV of the cosine sums above to 0.1 % (checked in tests/dsp/windows.test.ts), so we apply it to Kaiser.
function kaiserOverlap(alpha: number): number {
  const cached = kaiserOverlapCache.get(alpha);
  if (cached !== undefined) return cached;
  const rov = optimalOverlap(kaiserValues(alpha, 2000));
  kaiserOverlapCache.set(alpha, rov);
  return rov;
}

/** Overlap in steps of 0.001 that maximises amplitude flatness minus overlap correlation. Allocates. */
export function optimalOverlap(w: Float64Array): number {
  const n = w.length;
  let sumSq = 0;
  for (let i = 0; i < n; i++) sumSq += w[i] * w[i];
  const acc = new Float64Array(n);
  let best = -Infinity;
  let bestOverlap = 0;
  for (let milli = 0; milli < 950; milli++) {
    const r = milli / 1000;
    const step = n - Math.round(r * n);
    const af = amplitudeFlatness(w, step, acc);
    const oc = overlapCorrelation(w, step, sumSq);
    if (af - oc > best + 1e-12) {
      best = af - oc;
      bestOverlap = r;
    }
  }
  return bestOverlap;
}

/** OC = Σ w[n]·w[n+step] / Σ w² (Heinzel 2002 sec. 10). */
export function overlapCorrelation(w: Float64Array, step: number, sumSq: number): number {
  let s = 0;
  for (let i = 0; i + step < w.length; i++) s += w[i] * w[i + step];
  return s / sumSq;
}

// AF = min/max of the sum of windows shifted by multiples of step (Heinzel section 10).
function amplitudeFlatness(w: Float64Array, step: number, acc: Float64Array): number {
  for (let i = 0; i < step; i++) acc[i] = 0;
  for (let i = 0; i < w.length; i++) acc[i % step] += w[i];
  let lo = Infinity;
  let hi = -Infinity;
  for (let i = 0; i < step; i++) {
    if (acc[i] < lo) lo = acc[i];
    if (acc[i] > hi) hi = acc[i];
  }
  return lo / hi;
}
