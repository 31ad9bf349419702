// Settling check: did the floor drift during the capture? The second half's band power over the first half's is
// F(ν₂, ν₁) distributed when the floor is stationary (both are Welch estimates of the same density; dof from
// dsp/detection/threshold.ts). Outside the two-sided F interval at probability α the band has drifted.
import { bandBins } from '../../dsp/bands.ts';
import type { BandSpec } from '../../dsp/detection/band-compare.ts';
import { bandDegreesOfFreedom, fLowerQuantile, fUpperQuantile } from '../../dsp/detection/threshold.ts';
import type { Settling, SettlingBand } from './format.ts';
import { powerRatioDb } from '../../dsp/units.ts';

/** Default probability of calling a stationary band drifting. */
export const SETTLING_ALPHA = 1e-3;

export interface HalfEstimate {
  psd: Float64Array;
  equivalentAverages: number;
}

export function settlingCheck(
  channel: string,
  first: HalfEstimate,
  second: HalfEstimate,
  binHz: number,
  bands: readonly BandSpec[],
  correlation: Float64Array,
  alpha = SETTLING_ALPHA,
): { bands: SettlingBand[]; warnings: string[] } {
  const out: SettlingBand[] = [];
  const warnings: string[] = [];
  for (const band of bands) {
    const { first: lo, last: hi } = bandBins(first.psd.length, binHz, band.low, band.high);
    if (hi < lo) continue;
    let p1 = 0;
    let p2 = 0;
    for (let k = lo; k <= hi; k++) {
      p1 += first.psd[k];
      p2 += second.psd[k];
    }
    const n = hi - lo + 1;
    const nu1 = bandDegreesOfFreedom(first.equivalentAverages, n, correlation);
    const nu2 = bandDegreesOfFreedom(second.equivalentAverages, n, correlation);
    const driftDb = powerRatioDb(p2 / p1);
    const lowerDb = powerRatioDb(fLowerQuantile(alpha / 2, nu2, nu1));
    const upperDb = powerRatioDb(fUpperQuantile(alpha / 2, nu2, nu1));
    out.push({ channel, low: band.low, high: band.high, driftDb, lowerDb, upperDb });
    if (driftDb < lowerDb || driftDb > upperDb) {
      warnings.push(
        `${channel} ${fmt(band.low)}–${fmt(band.high)} Hz drifted ${driftDb.toFixed(2)} dB between the halves of the capture ` +
          `(stationary noise stays within ${lowerDb.toFixed(2)}…+${upperDb.toFixed(2)} dB at p = ${alpha}); let the rig settle and capture again.`,
      );
    }
  }
  return { bands: out, warnings };
}

export function combineSettling(
  parts: { bands: SettlingBand[]; warnings: string[] }[],
  alpha = SETTLING_ALPHA,
): Settling {
  const bands = parts.flatMap((p) => p.bands);
  const warnings = parts.flatMap((p) => p.warnings);
  return { settled: warnings.length === 0, alpha, bands, warnings };
}

function fmt(f: number): string {
  return Number(f.toPrecision(4)).toString();
}
