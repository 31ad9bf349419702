// Level and frequency of a spectral line read from a one-sided density.
//
// Why the sum over the lobe: a tone of RMS A at f0 = (k0+δ)·Δf gives, with window w of length N,
// psd[k]·Δf = A²·|W(k − k0 − δ)|² / (N·Σw²) (scipy density scaling, one-sided). For any δ,
// Σ_k |W(k − δ)|² = N·Σw² (Parseval applied to w[n]·e^(2πiδn/N)), so Σ psd[k]·Δf over all bins is A² whatever
// the offset δ; over the main lobe it misses only the sidelobe energy. Hence A_rms = sqrt(Σ_lobe psd·Δf), which
// is the same as sqrt(Σ_lobe spectrum / NENBW) for spectrum scaling (spectrum = psd·NENBW·Δf; Heinzel 2002 sec. 9).
// The peak frequency is the power-weighted centroid over the same bins.

export interface ToneReading {
  /** Bin of the largest density in the search range. */
  readonly peakBin: number;
  /** RMS amplitude of the line in the unit of the data. */
  readonly rms: number;
  /** Interpolated frequency in Hz (power-weighted centroid of the lobe). */
  readonly frequency: number;
  /** Bins summed, inclusive. */
  readonly first: number;
  readonly last: number;
}

/** Index of the largest value of psd[first..last]. */
export function peakBin(psd: Float64Array, first: number, last: number): number {
  let best = first;
  let max = -Infinity;
  for (let k = first; k <= last; k++) {
    if (psd[k] > max) {
      max = psd[k];
      best = k;
    }
  }
  return best;
}

/**
 * Reads the line whose peak is at `peak`: sums ceil(mainLobeHalfWidth) bins either side (clipped to the spectrum;
 * a lobe that reaches DC or Nyquist folds and reads low).
 */
export function toneAt(psd: Float64Array, binHz: number, mainLobeHalfWidth: number, peak: number): ToneReading {
  if (!(Number.isInteger(peak) && peak >= 0 && peak < psd.length)) {
    throw new RangeError(`toneAt: peak bin ${peak} is outside the ${psd.length} bins`);
  }
  const h = Math.ceil(mainLobeHalfWidth);
  const first = Math.max(0, peak - h);
  const last = Math.min(psd.length - 1, peak + h);
  let power = 0;
  let moment = 0;
  for (let k = first; k <= last; k++) {
    power += psd[k];
    moment += k * psd[k];
  }
  const frequency = power > 0 ? (moment / power) * binHz : peak * binHz;
  return { peakBin: peak, rms: Math.sqrt(power * binHz), frequency, first, last };
}

/**
 * The line at `peak` with the local floor taken off: the power in the main lobe minus the floor's share of it,
 *   A_rms² = (Σ_lobe psd[k] − n·floor)·Δf   (n = bins summed; clipped at 0),
 * so bare noise reads near 0 instead of the lobe's share of the floor (Heinzel, Rüdiger & Schilling 2002, §9–10:
 * a density's lobe integrates to the tone's mean square plus the noise in the lobe's bandwidth). The frequency is
 * the centroid of the excess over the floor. `floor` is the floor density (unit²/Hz) under the line, e.g. a local
 * median corrected to a mean. One rule for the spur and mains events and the dashboard's cursor readout.
 */
export function lineAboveFloor(
  psd: Float64Array,
  binHz: number,
  mainLobeHalfWidth: number,
  peak: number,
  floor: number,
): ToneReading {
  if (!(Number.isInteger(peak) && peak >= 0 && peak < psd.length)) {
    throw new RangeError(`lineAboveFloor: peak bin ${peak} is outside the ${psd.length} bins`);
  }
  const h = Math.ceil(mainLobeHalfWidth - 1e-9);
  const first = Math.max(0, peak - h);
  const last = Math.min(psd.length - 1, peak + h);
  const fl = floor > 0 ? floor : 0;
  let excess = 0;
  let weight = 0;
  let moment = 0;
  for (let k = first; k <= last; k++) {
    const e = psd[k] - fl;
    excess += e;
    if (e > 0) {
      weight += e;
      moment += k * e;
    }
  }
  const frequency = weight > 0 ? (moment / weight) * binHz : peak * binHz;
  return { peakBin: peak, rms: excess > 0 ? Math.sqrt(excess * binHz) : 0, frequency, first, last };
}

/** Finds the largest line with centre between lowHz and highHz and reads it. */
export function findTone(
  psd: Float64Array,
  binHz: number,
  mainLobeHalfWidth: number,
  lowHz: number,
  highHz: number,
): ToneReading {
  if (!(Number.isFinite(lowHz) && Number.isFinite(highHz) && lowHz >= 0 && lowHz <= highHz)) {
    throw new RangeError(`findTone: search range ${lowHz}:${highHz} Hz is invalid: need 0 ≤ low ≤ high`);
  }
  const first = Math.max(0, Math.ceil(lowHz / binHz));
  const last = Math.min(psd.length - 1, Math.floor(highHz / binHz));
  if (first > last) throw new RangeError(`findTone: ${lowHz}:${highHz} Hz holds no bin (bin spacing ${binHz} Hz)`);
  return toneAt(psd, binHz, mainLobeHalfWidth, peakBin(psd, first, last));
}
