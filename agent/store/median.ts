// Median of src[first..last] by quickselect on a scratch copy (Hoare's selection; for an even count the mean of
// the two middle values, the usual definition). NaN for an empty range.
import { select } from '../../dsp/detection/running-median.ts';

export function medianInRange(src: Float64Array, first: number, last: number, scratch: Float64Array): number {
  const n = last - first + 1;
  if (n <= 0) return NaN;
  for (let i = 0; i < n; i++) scratch[i] = src[first + i];
  const hi = select(scratch, n, n >> 1);
  if (n & 1) return hi;
  let lo = -Infinity;
  for (let i = 0; i < n >> 1; i++) if (scratch[i] > lo) lo = scratch[i]; // after selection the lower half is ≤ hi
  return (lo + hi) / 2;
}
