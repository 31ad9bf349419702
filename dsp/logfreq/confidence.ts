// Confidence interval of a density from its degrees of freedom: with ν·Ŝ/S ~ χ²_ν,
// S lies in [ν·Ŝ/χ²_ν(1 − α/2), ν·Ŝ/χ²_ν(α/2)] with probability 1 − α (e.g. Percival & Walden 1993, the
// chi-square confidence interval of a spectral estimate). ν = 2 × equivalent averages. The quantiles come from
// @stdlib, within 1e-9 of scipy.stats.chi2.ppf up to ν ≈ 200 and 1e-4 at ν = 5000: meant for display bands.
import chiSquareQuantile from '@stdlib/stats-base-dists-chisquare-quantile';

// A live view asks for the same ν again and again (each point's averages take the values of its ring as it fills
// and rolls: up to about a thousand per point at the top of a grid), and one quantile costs microseconds of series
// evaluation: remember them, keyed by the number itself. Bounded: cleared when full, so a caller cycling through
// more ν than this only loses the speed-up.
const MEMO_LIMIT = 1 << 15;
const memoByLevel = new Map<number, Map<number, { lower: number; upper: number }>>();

/** Factors (lower, upper) that multiply an estimate to give its confidence interval at `level`. */
export function densityIntervalFactors(dof: number, level = 0.95): { lower: number; upper: number } {
  if (!(level > 0 && level < 1)) throw new RangeError(`confidence level must lie in (0, 1), got ${level}`);
  if (!(dof > 0) || !Number.isFinite(dof)) return { lower: NaN, upper: NaN };
  let memo = memoByLevel.get(level);
  if (!memo) memoByLevel.set(level, (memo = new Map()));
  const known = memo.get(dof);
  if (known) return { lower: known.lower, upper: known.upper };
  const tail = (1 - level) / 2;
  const factors = { lower: dof / chiSquareQuantile(1 - tail, dof), upper: dof / chiSquareQuantile(tail, dof) };
  if (memo.size >= MEMO_LIMIT) memo.clear();
  memo.set(dof, factors);
  return { lower: factors.lower, upper: factors.upper };
}
