// A front end's noise budget referred to the amplifier input: the source resistance's Johnson noise √(4kTR), the
// amplifier's voltage density eₙ, its current density iₙ through the source resistance, and the converter's
// quantisation noise q/√(6·fs) divided by the gain ahead of it. Uncorrelated, so they add in quadrature
// (dsp/noise-theory.ts). Shared by the dashboard's budget form and `analyze` (a recording's metadata budget).
import { johnsonVoltageDensity, quadratureSum } from '../noise-theory.ts';

export interface BudgetSpec {
  sourceOhms: number;
  kelvin: number;
  /** V/√Hz */
  amplifierDensity: number;
  /** A/√Hz */
  amplifierCurrent: number;
  /** Quantisation density at the converter, V/√Hz (q/√(6·fs)). */
  quantisation: number;
  gain: number;
}

export interface BudgetTerms {
  total: number;
  parts: { name: string; density: number }[];
}

export function budgetTerms(b: BudgetSpec): BudgetTerms {
  if (!(b.gain > 0)) throw new RangeError('gain must be above 0');
  const parts = [
    { name: 'source R (Johnson)', density: b.sourceOhms > 0 ? johnsonVoltageDensity(b.sourceOhms, b.kelvin) : 0 },
    { name: 'amplifier eₙ', density: b.amplifierDensity },
    { name: 'amplifier iₙ·R', density: b.amplifierCurrent * b.sourceOhms },
    { name: 'ADC quantisation', density: b.quantisation / b.gain },
  ];
  return { total: quadratureSum(parts.map((p) => p.density)), parts };
}
