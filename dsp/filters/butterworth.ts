// Digital Butterworth low- and high-pass filters as second-order sections, designed by the bilinear transform
// with frequency prewarping (Oppenheim & Schafer, "Discrete-Time Signal Processing", bilinear transform section).
// Section layout and ordering follow scipy.signal.butter(..., output='sos') so the coefficients can be compared
// one for one: rows [b0, b1, b2, 1, a1, a2], poles farthest from the unit circle first, the overall gain in the
// first section (scipy.signal.zpk2sos, pairing 'nearest').

export type ButterworthKind = 'lowpass' | 'highpass';

/** Second-order sections, 6 numbers a row: b0 b1 b2 a0(=1) a1 a2, flattened. */
export interface SosFilter {
  readonly sections: number;
  readonly sos: Float64Array;
}

/**
 * Designs an even-order Butterworth filter. Analog prototype poles p_k = Ω·exp(iπ(2k+n+1)/(2n)),
 * Ω = 2fs·tan(π·fc/fs) (prewarping puts the −3 dB point exactly at fc), mapped by z = (2fs + p)/(2fs − p).
 * Low-pass zeros sit at z = −1 with unit gain at DC; high-pass zeros at z = +1 with unit gain at Nyquist
 * (the analog high-pass s → Ω/s has the same pole set as the low-pass for a Butterworth).
 */
export function butterworthSos(kind: ButterworthKind, order: number, cutoffHz: number, sampleRate: number): SosFilter {
  if (kind !== 'lowpass' && kind !== 'highpass') {
    throw new RangeError(`butterworthSos: kind must be 'lowpass' or 'highpass', got '${String(kind)}'`);
  }
  if (!Number.isInteger(order) || order < 2 || order > 24 || order % 2 !== 0) {
    throw new RangeError(`butterworthSos: order must be an even integer from 2 to 24, got ${order}`);
  }
  if (!(sampleRate > 0) || !Number.isFinite(sampleRate)) {
    throw new RangeError(`butterworthSos: sampleRate must be a positive number of Hz, got ${sampleRate}`);
  }
  if (!(cutoffHz > 0 && cutoffHz < sampleRate / 2)) {
    throw new RangeError(
      `butterworthSos: cutoff ${cutoffHz} Hz must lie strictly between 0 and Nyquist (${sampleRate / 2} Hz)`,
    );
  }
  const fs2 = 2 * sampleRate;
  const omega = fs2 * Math.tan((Math.PI * cutoffHz) / sampleRate);
  const half = order / 2;
  const a1s: number[] = [];
  const a2s: number[] = [];
  const gains: number[] = [];
  const lowpass = kind === 'lowpass';
  // One pole of each conjugate pair: k = 0..n/2−1 gives the upper-half-plane poles.
  for (let k = 0; k < half; k++) {
    const theta = (Math.PI * (2 * k + order + 1)) / (2 * order);
    const pr = omega * Math.cos(theta);
    const pi = omega * Math.sin(theta);
    // z = (fs2 + p)/(fs2 − p): Re z = (fs2² − |p|²)/|fs2 − p|², |z|² = |fs2 + p|²/|fs2 − p|².
    const den = (fs2 - pr) * (fs2 - pr) + pi * pi;
    const p2 = pr * pr + pi * pi;
    a1s.push((-2 * (fs2 * fs2 - p2)) / den);
    a2s.push(((fs2 + pr) * (fs2 + pr) + pi * pi) / den);
    // Unit gain at DC (low-pass) or Nyquist (high-pass): g = |1 ∓ z|²/4 with 1 − z = −2p/(fs2 − p) and
    // 1 + z = 2·fs2/(fs2 − p), written out so a 0.1 Hz corner at 10 kS/s keeps full precision (1 + a1 + a2
    // would cancel to a few digits).
    gains.push(lowpass ? p2 / den : (fs2 * fs2) / den);
  }
  // Farthest from the unit circle first (smallest |z|² = a2), as zpk2sos leaves the sharpest pair last.
  const order_ = a2s.map((_, i) => i).sort((i, j) => a2s[i] - a2s[j]);
  const sos = new Float64Array(6 * half);
  let gain = 1;
  const zeroSign = lowpass ? 1 : -1; // b = [1, 2, 1] or [1, −2, 1]
  for (let s = 0; s < half; s++) {
    gain *= gains[order_[s]];
    sos.set([1, 2 * zeroSign, 1, 1, a1s[order_[s]], a2s[order_[s]]], 6 * s);
  }
  sos[0] *= gain;
  sos[1] *= gain;
  sos[2] *= gain;
  return { sections: half, sos };
}

/** Joins filters into one cascade (e.g. a high-pass then a low-pass). */
export function cascadeSos(...filters: SosFilter[]): SosFilter {
  let sections = 0;
  for (const f of filters) sections += f.sections;
  const sos = new Float64Array(6 * sections);
  let at = 0;
  for (const f of filters) {
    sos.set(f.sos, at);
    at += f.sos.length;
  }
  return { sections, sos };
}

/**
 * |H(e^{iω})|² of a cascade at frequency f, the product over sections of |B|²/|A|². Each quadratic is
 * evaluated as e^{−iω}·(c0·e^{iω} + c1 + c2·e^{−iω}) with cos ω = 1 − 2·sin²(ω/2):
 * real part (c0 + c1 + c2) − 2(c0 + c2)·sin²(ω/2), imaginary part (c0 − c2)·sin ω. Near DC this keeps the
 * digits the direct form 1 + a1·cos ω + a2·cos 2ω cancels away for poles close to z = 1.
 */
export function sosPowerResponse(filter: SosFilter, frequencyHz: number, sampleRate: number): number {
  const w = (2 * Math.PI * frequencyHz) / sampleRate;
  const sh = Math.sin(w / 2);
  const sh2 = 2 * sh * sh;
  const s1 = Math.sin(w);
  const sos = filter.sos;
  let power = 1;
  for (let s = 0; s < filter.sections; s++) {
    const o = 6 * s;
    const br = sos[o] + sos[o + 1] + sos[o + 2] - (sos[o] + sos[o + 2]) * sh2;
    const bi = (sos[o] - sos[o + 2]) * s1;
    const ar = sos[o + 3] + sos[o + 4] + sos[o + 5] - (sos[o + 3] + sos[o + 5]) * sh2;
    const ai = (sos[o + 3] - sos[o + 5]) * s1;
    power *= (br * br + bi * bi) / (ar * ar + ai * ai);
  }
  return power;
}

/**
 * Samples for the slowest pole's envelope to decay by `ratio` (e.g. 1e-4): n = ln(ratio)/ln|z|max.
 * The impulse response of a stable cascade is bounded by a multiple of |z|max^n.
 */
export function settleSamples(filter: SosFilter, ratio: number): number {
  if (!(ratio > 0 && ratio < 1)) throw new RangeError(`settleSamples: ratio must lie in (0, 1), got ${ratio}`);
  let rmax = 0;
  for (let s = 0; s < filter.sections; s++) {
    const a1 = filter.sos[6 * s + 4];
    const a2 = filter.sos[6 * s + 5];
    const disc = a1 * a1 - 4 * a2;
    // Complex pair: |z| = sqrt(a2); real pair: the larger root magnitude.
    const r =
      disc < 0 ? Math.sqrt(a2) : Math.max(Math.abs((-a1 + Math.sqrt(disc)) / 2), Math.abs((-a1 - Math.sqrt(disc)) / 2));
    if (r > rmax) rmax = r;
  }
  if (rmax >= 1) throw new RangeError('settleSamples: the filter is not stable (a pole on or outside the unit circle)');
  if (rmax === 0) return filter.sections * 2;
  return Math.ceil(Math.log(ratio) / Math.log(rmax));
}
