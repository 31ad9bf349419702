// Engineering notation with SI prefixes (BIPM SI Brochure, 9th ed., table 7): 1.23e-7 V → "123 nV". One function
// for the agent's reports and event details and for the dashboard's readings.
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

/** `digits` significant digits and the largest SI prefix that keeps the mantissa ≥ 1 ("1.00 µV", "123 nV/√Hz"). */
export function formatSi(value: number, unit: string, digits = 3): string {
  if (!Number.isFinite(value)) return `${value} ${unit}`;
  if (value === 0) return `0 ${unit}`;
  for (const [factor, prefix] of PREFIXES) {
    // Round first, so 999.96e-9 becomes "1.00 µV" rather than "1000 nV".
    const m = value / factor;
    let text = m.toPrecision(digits);
    if (Math.abs(Number(text)) < 1) continue;
    if (text.includes('e')) text = m.toFixed(0); // e.g. 995 at 2 digits: "995", never "9.9e+2"
    return `${text} ${prefix}${unit}`;
  }
  return `${value.toExponential(digits - 1)} ${unit}`;
}
