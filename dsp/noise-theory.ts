// Textbook noise densities for a noise budget, in SI units. Constants are exact by the 2019 SI definition
// (BIPM SI Brochure, 9th edition): k = 1.380649e−23 J/K, e = 1.602176634e−19 C.

export const BOLTZMANN = 1.380649e-23;
export const ELEMENTARY_CHARGE = 1.602176634e-19;

function requirePositive(what: string, value: number): void {
  if (!(Number.isFinite(value) && value > 0)) throw new RangeError(`${what} must be a positive number, got ${value}`);
}

/** Johnson–Nyquist voltage density sqrt(4kTR) in V/√Hz (Nyquist 1928). */
export function johnsonVoltageDensity(ohms: number, kelvin: number): number {
  requirePositive('resistance (Ω)', ohms);
  requirePositive('temperature (K)', kelvin);
  return Math.sqrt(4 * BOLTZMANN * kelvin * ohms);
}

/** Johnson–Nyquist current density sqrt(4kT/R) in A/√Hz. */
export function johnsonCurrentDensity(ohms: number, kelvin: number): number {
  requirePositive('resistance (Ω)', ohms);
  requirePositive('temperature (K)', kelvin);
  return Math.sqrt((4 * BOLTZMANN * kelvin) / ohms);
}

/** Shot noise of a DC current, sqrt(2qI) in A/√Hz (Schottky 1918). */
export function shotNoiseDensity(amperes: number): number {
  if (!(Number.isFinite(amperes) && amperes >= 0)) throw new RangeError(`current (A) must be ≥ 0, got ${amperes}`);
  return Math.sqrt(2 * ELEMENTARY_CHARGE * amperes);
}

/**
 * Density of ideal quantisation noise, white over 0..fs/2: q/sqrt(6·fs) with q = span/2^bits, where span is the
 * full-scale span (e.g. 5 V for 0..5 V or ±2.5 V). From the uniform error's variance q²/12 spread over fs/2.
 */
export function quantizationDensity(spanVolts: number, bits: number, sampleRate: number): number {
  requirePositive('ADC span (V)', spanVolts);
  if (!(Number.isInteger(bits) && bits >= 1 && bits <= 64))
    throw new RangeError(`ADC bits must be an integer 1..64, got ${bits}`);
  requirePositive('sample rate (S/s)', sampleRate);
  const q = spanVolts / 2 ** bits;
  return q / Math.sqrt(6 * sampleRate);
}

/** Quadrature (root-sum-square) total of uncorrelated contributions. */
export function quadratureSum(contributions: readonly number[]): number {
  let s = 0;
  for (const c of contributions) s += c * c;
  return Math.sqrt(s);
}

/** RMS of a white density over a bandwidth: e·sqrt(Δf). */
export function whiteNoiseRms(density: number, bandwidthHz: number): number {
  if (!(Number.isFinite(bandwidthHz) && bandwidthHz >= 0))
    throw new RangeError(`bandwidth (Hz) must be ≥ 0, got ${bandwidthHz}`);
  return density * Math.sqrt(bandwidthHz);
}

/** Peak-to-peak estimate of Gaussian noise: 6.6 × rms (exceeded about 0.1 % of the time; common practice). */
export const GAUSSIAN_PEAK_TO_PEAK_FACTOR = 6.6;

export function gaussianPeakToPeak(rms: number): number {
  return GAUSSIAN_PEAK_TO_PEAK_FACTOR * rms;
}
