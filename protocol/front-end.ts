// A channel's front end as the dashboard needs it: the gain ahead of the ADC, whether the samples were already
// divided by it, the noise budget's parameters and the converter's step, so the page can refer densities to the
// amplifier input or to the ADC and draw the budget at the same point.

/** Noise budget at the amplifier input: source resistance (Ω), temperature (K), amplifier densities. */
export interface BudgetParameters {
  sourceOhms: number;
  kelvin: number;
  /** V/√Hz */
  amplifierDensity: number;
  /** A/√Hz */
  amplifierCurrent: number;
}

export interface ChannelFront {
  /** Gain ahead of the ADC, V/V (> 0). */
  gain?: number;
  /** The samples were divided by the gain: they read at the amplifier input. */
  inputReferred: boolean;
  budget?: BudgetParameters;
  /** The converter's step at the ADC, unit per count (> 0). */
  lsb?: number;
  /** ADC full scale (peak), in the unit at the ADC (> 0). */
  fullScale?: number;
}

const BUDGET_KEYS = ['sourceOhms', 'kelvin', 'amplifierDensity', 'amplifierCurrent'] as const;
const positive = (v: unknown): boolean => typeof v === 'number' && Number.isFinite(v) && v > 0;

/** Null when `x` is a valid ChannelFront, else what is wrong with it (strict: no unknown keys). */
export function channelFrontProblem(x: unknown): string | null {
  if (typeof x !== 'object' || x === null || Array.isArray(x)) return 'front must be an object';
  const o = x as Record<string, unknown>;
  for (const k of Object.keys(o))
    if (!['gain', 'inputReferred', 'budget', 'lsb', 'fullScale'].includes(k)) return `front.${k} is not a known key`;
  if (typeof o.inputReferred !== 'boolean') return 'front.inputReferred must be true or false';
  for (const k of ['gain', 'lsb', 'fullScale'])
    if (o[k] !== undefined && !positive(o[k])) return `front.${k} must be a finite number above 0`;
  if (o.inputReferred && o.gain === undefined) return 'front.inputReferred needs front.gain';
  if (o.budget !== undefined) {
    const b = o.budget as Record<string, unknown>;
    if (typeof b !== 'object' || b === null) return 'front.budget must be an object';
    for (const k of Object.keys(b))
      if (!(BUDGET_KEYS as readonly string[]).includes(k)) return `front.budget.${k} is not a known key`;
    for (const k of BUDGET_KEYS)
      if (!(typeof b[k] === 'number' && Number.isFinite(b[k]) && (b[k] as number) >= 0))
        return `front.budget.${k} must be a number ≥ 0`;
  }
  return null;
}
