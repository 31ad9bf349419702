// Confidence interval of a density from its degrees of freedom: with ν·Ŝ/S ~ χ²_ν,
// S lies in [ν·Ŝ/χ²_ν(1 − α/2), ν·Ŝ/χ²_ν(α/2)] with probability 1 − α (e.g. Percival & Walden 1993, the
// chi-square confidence interval of a spectral estimate). ν = 2 × equivalent averages. The quantiles come from
// @stdlib, within 1e-9 of scipy.stats.chi2.ppf up to ν ≈ 200 and 1e-4 at ν = 5000: meant for display bands.
import chiSquareQuantile from '@stdlib/stats-base-dists-chisquare-quantile';

/** Factors (lower, upper) that multiply an estimate to give its confidence interval at `level`. */
export function densityIntervalFactors(dof: number, level = 0.95): { lower: number; upper: number } {
  if (!(level > 0 && level < 1)) throw new RangeError(`confidence level must lie in (0, 1), got ${level}`);
  if (!(dof > 0) || !Number.isFinite(dof)) return { lower: NaN, upper: NaN };
  const tail = (1 - level) / 2;
  return { lower: dof / chiSquareQuantile(1 - tail, dof), upper: dof / chiSquareQuantile(tail, dof) };
}
