// Fixed y ranges for the density charts, so the floor does not jump as a line comes and goes.

/** Margins: at least a decade below the lowest baseline/threshold value and two above the highest, to whole
 *  decades (log axes), or 10 dB below and 30 dB above (dB axes). Lines tens of dB above the floor stay on the chart. */
const LOG_BELOW = 10;
const LOG_ABOVE = 100;
const DB_BELOW = 10;
const DB_ABOVE = 30;

function extent(series: ArrayLike<number | null>[], log: boolean): [number, number] | null {
  let lo = Infinity;
  let hi = -Infinity;
  for (const s of series) {
    for (let i = 0; i < s.length; i++) {
      const v = s[i];
      if (v === null || !Number.isFinite(v) || (log && v <= 0)) continue;
      if (v < lo) lo = v;
      if (v > hi) hi = v;
    }
  }
  return lo <= hi ? [lo, hi] : null;
}

/** 10^k as its decimal literal (10 ** -24 is 1.0000000000000001e-24; the literal is the decade itself). */
const decade = (k: number): number => Number(`1e${k}`);

/**
 * Log ranges end on whole decades: uPlot's log splits step from the range's minimum, and a minimum just under a
 * decade (e.g. 9.95e-10) makes them step by a non-decade that rounds to 0, an endless loop ("Invalid array length").
 */
export function decadeRange(lo: number, hi: number): [number, number] {
  const a = Math.floor(Math.log10(lo));
  return [decade(a), decade(Math.max(a + 1, Math.ceil(Math.log10(hi))))];
}

function widen([lo, hi]: [number, number], log: boolean): [number, number] {
  return log ? decadeRange(lo / LOG_BELOW, hi * LOG_ABOVE) : [lo - DB_BELOW, hi + DB_ABOVE];
}

/** The fixed range from the baseline, thresholds and expected floor, or null when none is known yet. */
export function fixedDensityRange(
  reference: ArrayLike<number | null>[],
  floor: ArrayLike<number>,
  log: boolean,
): [number, number] | null {
  const e = extent([...reference, floor], log);
  return e ? widen(e, log) : null;
}

/** A range from the data itself (no baseline yet, or "follow data" chosen), with the same margins. */
export function paddedRange(data: ArrayLike<number | null>[], log: boolean): [number, number] {
  const e = extent(data, log);
  if (!e) return log ? [1e-12, 1] : [-200, 0];
  return widen(e, log);
}
