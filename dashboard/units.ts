// Display units of a one-sided density: amplitude density (unit/√Hz, log axis), its level in dB re 1 unit/√Hz,
// the power density (unit²/Hz, log axis), and, where the converter is known, the level re full scale (dBFS/√Hz)
// or the density in converter steps (LSB/√Hz). dB of a density: 10·log10(psd) = 20·log10(asd) (IEC 60027-3).
// The converter units are at the ADC by definition; their factors come from dsp/units.ts, as analyze's.
import { dbfsPowerScale, lsbPowerScale, powerRatioDb } from '../dsp/units.ts';
import type { ChannelFront } from '../protocol/front-end.ts';
export type DensityUnit = 'asd' | 'dbv' | 'psd' | 'dbfs' | 'lsb';
export const DENSITY_UNITS: readonly DensityUnit[] = ['asd', 'dbv', 'psd', 'dbfs', 'lsb'];

/** dBFS and LSB: re the converter, so shown at the ADC whatever the referral switch says. */
export function isConverterUnit(u: DensityUnit): boolean {
  return u === 'dbfs' || u === 'lsb';
}

export function densityLabel(u: DensityUnit, unit: string): string {
  if (u === 'asd') return `${unit}/√Hz`;
  if (u === 'psd') return `${unit}²/Hz`;
  if (u === 'dbfs') return 'dBFS/√Hz';
  if (u === 'lsb') return 'LSB/√Hz';
  return unit === 'V' ? 'dBV/√Hz' : `dB re 1 ${unit}/√Hz`;
}

/** The label of the units menu entry (the y axis says which point, the menu only which quantity). */
export function unitMenuLabel(u: DensityUnit, unit: string): string {
  return isLogAxis(u) ? `${densityLabel(u, unit)} (log)` : densityLabel(u, unit);
}

export function isLogAxis(u: DensityUnit): boolean {
  return u !== 'dbv' && u !== 'dbfs';
}

/**
 * The factor on a PSD at the ADC that takes it into `u` before fromPsd: 2/FS² for dBFS, 1/lsb² for LSB, 1 for the
 * others; null where the channel's full scale or step is unknown (then that unit is not offered).
 */
export function converterScale(u: DensityUnit, front: ChannelFront | undefined): number | null {
  if (u === 'dbfs') return front?.fullScale !== undefined ? dbfsPowerScale(front.fullScale) : null;
  if (u === 'lsb') return front?.lsb !== undefined ? lsbPowerScale(front.lsb) : null;
  return 1;
}

/** The units every channel can be shown in: dBFS and LSB only where each channel's converter is known. */
export function unitsAvailable(fronts: readonly (ChannelFront | undefined)[]): DensityUnit[] {
  return DENSITY_UNITS.filter((u) => fronts.length > 0 && fronts.every((f) => converterScale(u, f) !== null));
}

/** An RMS amplitude (already scaled like the PSD) in the unit shown: dBFS, LSB rms, or the channel unit. */
export function formatAmplitude(
  u: DensityUnit,
  rms: number,
  unit: string,
  si: (v: number, unit: string) => string,
): string {
  if (!Number.isFinite(rms)) return '—';
  if (u === 'dbfs') return `${powerRatioDb(rms * rms).toFixed(1)} dBFS`;
  if (u === 'lsb') return `${rms.toPrecision(3)} LSB rms`;
  return si(rms, `${unit} rms`);
}

/** A density value from fromPsd, as text in the unit shown. */
export function formatDensity(
  u: DensityUnit,
  d: number,
  unit: string,
  si: (v: number, unit: string) => string,
): string {
  if (u === 'dbv' || u === 'dbfs') return `${d.toFixed(1)} ${densityLabel(u, unit)}`;
  if (u === 'lsb') return `${d.toPrecision(3)} ${densityLabel(u, unit)}`;
  return si(d, densityLabel(u, unit));
}

/** Converts one PSD value (unit²/Hz, already referred and scaled) for display; zero and negative powers become null (gaps on a log axis). */
export function fromPsd(u: DensityUnit, p: number): number | null {
  if (!(p > 0)) return null;
  if (u === 'asd' || u === 'lsb') return Math.sqrt(p);
  if (u === 'psd') return p;
  return powerRatioDb(p);
}

/**
 * Converts psd[from..from+n) into out[0..n). A hot path (4 × 8193 values at 10 updates/s): indexed loop, no
 * allocation; non-positive values become NaN, which uPlot draws as a gap.
 */
export function convertInto(u: DensityUnit, psd: ArrayLike<number>, from: number, out: Float64Array, factor = 1): void {
  const n = out.length;
  if (u === 'asd' || u === 'lsb')
    for (let i = 0; i < n; i++) {
      const p = psd[from + i] * factor;
      out[i] = p > 0 ? Math.sqrt(p) : NaN;
    }
  else if (u === 'psd')
    for (let i = 0; i < n; i++) {
      const p = psd[from + i] * factor;
      out[i] = p > 0 ? p : NaN;
    }
  else
    for (let i = 0; i < n; i++) {
      const p = psd[from + i] * factor;
      out[i] = p > 0 ? powerRatioDb(p) : NaN;
    }
}
