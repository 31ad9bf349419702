// Noise factor, noise figure and noise temperature of an amplifier against a resistive source (common practice;
// e.g. the usual definitions in low-noise amplifier application notes):
//   F = 1 + e_amp² / (4kTR),  NF = 10·log10 F dB,  T_e = T·(F − 1) = e_amp² / (4kR),
// with e_amp the amplifier's input-referred voltage density (its current noise times R included) and 4kTR the
// source's Johnson density squared. The reference temperature of the standard definition is T₀ = 290 K.
import { BOLTZMANN, johnsonVoltageDensity } from '../noise-theory.ts';
import { powerRatioDb } from '../units.ts';

export const REFERENCE_KELVIN = 290;

export interface NoiseFigure {
  /** Noise factor F (ratio). */
  factor: number;
  figureDb: number;
  /** Equivalent input noise temperature, K. */
  kelvin: number;
}

/** From the amplifier's own input-referred density e_amp (V/√Hz). */
export function noiseFigure(eAmp: number, ohms: number, kelvin = REFERENCE_KELVIN): NoiseFigure {
  const source = johnsonVoltageDensity(ohms, kelvin);
  const excess = (eAmp * eAmp) / (source * source);
  return { factor: 1 + excess, figureDb: powerRatioDb(1 + excess), kelvin: (eAmp * eAmp) / (4 * BOLTZMANN * ohms) };
}

/**
 * From a measured input-referred density that includes the source (measured with it connected):
 * e_amp² = e_meas² − 4kTR. A measurement below the source's own Johnson noise gives F < 1 (then the gain or the
 * resistance given is wrong); it is returned as is so that the caller can say so.
 */
export function noiseFigureFromTotal(eMeasured: number, ohms: number, kelvin = REFERENCE_KELVIN): NoiseFigure {
  const source = johnsonVoltageDensity(ohms, kelvin);
  const factor = (eMeasured * eMeasured) / (source * source);
  return { factor, figureDb: powerRatioDb(factor), kelvin: kelvin * (factor - 1) };
}
