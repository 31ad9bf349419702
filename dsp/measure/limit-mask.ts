// A limit mask: a piecewise-linear ASD limit in log-log coordinates (straight lines on a log-log plot, the way
// datasheets and test specifications draw them). Between points (f₁, L₁) and (f₂, L₂):
//   log L(f) = log L₁ + (log f − log f₁)·(log L₂ − log L₁)/(log f₂ − log f₁).
// Outside [f₁, f_last] there is no limit. The margin at a bin is 20·log10(L(f)/asd(f)) dB: positive below the limit.

export interface LimitMask {
  /** Strictly increasing, > 0, Hz. */
  frequency: Float64Array;
  /** > 0, in the compared density's unit (unit/√Hz). */
  limit: Float64Array;
}

export interface MaskVerdict {
  pass: boolean;
  /** Frequency of the smallest margin (the worst excess when failing), NaN when no bin lies under the mask. */
  worstFrequency: number;
  worstMarginDb: number;
  /** Bins compared. */
  bins: number;
}

/** L(f) by log-log interpolation; NaN outside the mask's span. */
export function maskLimitAt(mask: LimitMask, f: number): number {
  const fs = mask.frequency;
  const n = fs.length;
  if (!(f >= fs[0] && f <= fs[n - 1])) return NaN;
  let i = 0;
  while (i + 1 < n - 1 && fs[i + 1] < f) i++;
  if (n === 1 || f === fs[i]) return mask.limit[i];
  const u = (Math.log(f) - Math.log(fs[i])) / (Math.log(fs[i + 1]) - Math.log(fs[i]));
  return Math.exp(Math.log(mask.limit[i]) + u * (Math.log(mask.limit[i + 1]) - Math.log(mask.limit[i])));
}

/** The limit at every bin (NaN where the mask does not reach). */
export function maskOnBins(mask: LimitMask, frequencies: Float64Array): Float64Array {
  const out = new Float64Array(frequencies.length);
  for (let k = 0; k < frequencies.length; k++) out[k] = maskLimitAt(mask, frequencies[k]);
  return out;
}

/** Verdict over bins [first, last] (DC is the caller's to leave out) of an ASD against limits from maskOnBins. */
export function judgeMask(
  asd: Float64Array,
  limits: Float64Array,
  frequencies: Float64Array,
  first: number,
  last: number,
): MaskVerdict {
  let worst = Infinity;
  let worstK = -1;
  let bins = 0;
  for (let k = Math.max(first, 0); k <= Math.min(last, asd.length - 1); k++) {
    const lim = limits[k];
    if (!(lim > 0)) continue;
    bins++;
    const margin = 20 * Math.log10(lim / asd[k]);
    if (margin < worst) {
      worst = margin;
      worstK = k;
    }
  }
  if (worstK < 0) return { pass: true, worstFrequency: NaN, worstMarginDb: NaN, bins: 0 };
  return { pass: worst >= 0, worstFrequency: frequencies[worstK], worstMarginDb: worst, bins };
}
