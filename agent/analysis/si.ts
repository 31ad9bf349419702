// Engineering notation with SI prefixes (BIPM SI Brochure, 9th ed., table 7): 1.23e-7 V → "123 nV".
const PREFIXES: [number, string][] = [
  [1e9, 'G'],
  [1e6, 'M'],
  [1e3, 'k'],
  [1, ''],
  [1e-3, 'm'],
  [1e-6, 'µ'],
  [1e-9, 'n'],
  [1e-12, 'p'],
  [1e-15, 'f'],
  [1e-18, 'a'],
];

/** Formats `value` with 3 significant digits and the largest SI prefix that keeps it ≥ 1 ("1.00 µV", "123 nV/√Hz"). */
export function formatSi(value: number, unit: string): string {
  if (!Number.isFinite(value)) return `${value} ${unit}`;
  if (value === 0) return `0 ${unit}`;
  for (const [factor, prefix] of PREFIXES) {
    // Round first, so 999.96e-9 becomes "1.00 µV" rather than "1000 nV".
    const text = (value / factor).toPrecision(3);
    if (Math.abs(Number(text)) >= 1) return `${text} ${prefix}${unit}`;
  }
  return `${value.toExponential(2)} ${unit}`;
}
