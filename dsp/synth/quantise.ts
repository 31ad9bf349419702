// The converter: volts → counts, rounded to nearest and saturated at ±fullScale (the end codes; this is where
// clipping happens). Float boards (integer = false) round to binary32 instead of to whole counts.

/** Writes counts[0..n) from volts[0..n); returns how many samples were clipped. */
export function quantise(
  volts: Float64Array,
  counts: Float64Array,
  n: number,
  perCount: number,
  fullScale: number,
  integer: boolean,
): number {
  const inv = 1 / perCount;
  let clipped = 0;
  for (let i = 0; i < n; i++) {
    let c = integer ? Math.round(volts[i] * inv) : Math.fround(volts[i] * inv);
    if (c > fullScale) {
      c = fullScale;
      clipped++;
    } else if (c < -fullScale) {
      c = -fullScale;
      clipped++;
    }
    counts[i] = c + 0; // −0 → +0: a converter has one zero code, and decoded frames give +0
  }
  return clipped;
}
