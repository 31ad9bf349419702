// Noise figure and noise temperature of a report's channels against a resistive source, per band (from the band's
// mean density, Σ psd·Δf / bandwidth) and per bin. The measured density is taken at the amplifier input with the
// source connected, so it holds the source's Johnson noise too: F = e²/(4kTR) = 1 + e_amp²/(4kTR)
// (dsp/measure/noise-figure.ts). Use --input-referred (or an input-referred recording) for densities at the input.
import type { BinRange } from '../../dsp/bands.ts';
import { johnsonVoltageDensity } from '../../dsp/noise-theory.ts';
import { noiseFigureFromTotal, REFERENCE_KELVIN } from '../../dsp/measure/noise-figure.ts';
import type { Band } from '../../protocol/bands.ts';

export interface SourceSpec {
  ohms: number;
  /** Source temperature, K (default 290 K, the reference temperature of the noise-figure definition). */
  kelvin?: number;
}

export interface NoiseFigureReport {
  sourceOhms: number;
  sourceKelvin: number;
  /** √(4kTR) of the source, V/√Hz. */
  sourceDensity: number;
  bands: { low: number; high: number; density: number; noiseFigureDb: number; noiseTemperature: number }[];
  /** Per bin (DC NaN). */
  noiseFigureDb: Float64Array;
  noiseTemperature: Float64Array;
}

export function bandNoiseFigures(
  psd: Float64Array,
  binHz: number,
  bands: readonly Band[],
  ranges: readonly BinRange[],
  source: SourceSpec,
): NoiseFigureReport {
  const kelvin = source.kelvin ?? REFERENCE_KELVIN;
  const nfDb = new Float64Array(psd.length);
  const te = new Float64Array(psd.length);
  nfDb[0] = NaN;
  te[0] = NaN;
  for (let k = 1; k < psd.length; k++) {
    const f = noiseFigureFromTotal(Math.sqrt(psd[k]), source.ohms, kelvin);
    nfDb[k] = f.figureDb;
    te[k] = f.kelvin;
  }
  return {
    sourceOhms: source.ohms,
    sourceKelvin: kelvin,
    sourceDensity: johnsonVoltageDensity(source.ohms, kelvin),
    bands: bands.map((b, i) => {
      const { first, last } = ranges[i];
      const lo = Math.max(1, first);
      let s = 0;
      for (let k = lo; k <= last; k++) s += psd[k];
      const density = Math.sqrt(s / Math.max(1, last - lo + 1));
      const f = noiseFigureFromTotal(density, source.ohms, kelvin);
      return { low: b.low, high: b.high, density, noiseFigureDb: f.figureDb, noiseTemperature: f.kelvin };
    }),
    noiseFigureDb: nfDb,
    noiseTemperature: te,
  };
}
