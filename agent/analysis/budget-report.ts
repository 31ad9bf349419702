// A recording's noise budget (from its metadata: source resistance and temperature, amplifier densities, gain) set
// against the measured density: the quadrature sum of the terms (dsp/measure/noise-budget.ts) at the point the
// report is referred to, and the measured density near 1 kHz (√ of the mean density over 900–1100 Hz), with the
// difference in dB. The quantisation term is one LSB's q/√(6·fs) (common practice: uniform error q²/12 over fs/2).
import { budgetTerms } from '../../dsp/measure/noise-budget.ts';
import type { ChannelMetadata } from '../wav/metadata.ts';

export interface BudgetReport {
  referredTo: 'input' | 'adc';
  total: number;
  parts: { name: string; density: number }[];
  /** Where the measured density is taken, Hz, and its value (unit/√Hz); NaN when the file's band stops below. */
  at: number;
  measured: number;
  differenceDb: number;
}

export const BUDGET_CHECK_HZ = 1000;

export function budgetReport(
  meta: ChannelMetadata,
  psd: Float64Array,
  binHz: number,
  sampleRate: number,
  lsb: number | undefined,
  referredTo: 'input' | 'adc',
): BudgetReport | undefined {
  const b = meta.budget;
  if (!b) return undefined;
  const gain = meta.gain ?? 1;
  const t = budgetTerms({ ...b, quantisation: lsb !== undefined ? lsb / Math.sqrt(6 * sampleRate) : 0, gain });
  const scale = referredTo === 'input' ? 1 : gain;
  const parts = t.parts.map((p) => ({ name: p.name, density: p.density * scale }));
  let s = 0;
  let n = 0;
  for (let k = 1; k < psd.length; k++) {
    const f = k * binHz;
    if (f >= 0.9 * BUDGET_CHECK_HZ && f <= 1.1 * BUDGET_CHECK_HZ) {
      s += psd[k];
      n++;
    }
  }
  const measured = n > 0 ? Math.sqrt(s / n) : NaN;
  const total = t.total * scale;
  return { referredTo, total, parts, at: BUDGET_CHECK_HZ, measured, differenceDb: 20 * Math.log10(measured / total) };
}
