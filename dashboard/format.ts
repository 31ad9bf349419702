// Number formatting for the dashboard: engineering prefixes for readings, '.' decimals everywhere.
const PREFIXES: [number, string][] = [
  [1e9, 'G'], [1e6, 'M'], [1e3, 'k'], [1, ''], [1e-3, 'm'], [1e-6, 'µ'], [1e-9, 'n'], [1e-12, 'p'], [1e-15, 'f'], [1e-18, 'a'],
];

/** 1.23e-6, 'V' → "1.23 µV"; keeps `digits` significant figures. */
export function si(value: number | null | undefined, unit: string, digits = 3): string {
  if (value === null || value === undefined || !Number.isFinite(value)) return '—';
  if (value === 0) return `0 ${unit}`;
  const a = Math.abs(value);
  for (const [scale, p] of PREFIXES) {
    if (a >= scale * 0.9995) {
      const m = value / scale; // 1 ≤ |m| < 1000: never exponent notation, e.g. 700 not 7.0e+2
      return `${Math.abs(m) >= 10 ** digits - 0.5 ? m.toFixed(0) : m.toPrecision(digits)} ${p}${unit}`;
    }
  }
  return `${value.toExponential(digits - 1)} ${unit}`;
}

export function fixed(value: number | null | undefined, decimals: number): string {
  return value === null || value === undefined || !Number.isFinite(value) ? '—' : value.toFixed(decimals);
}

/** Band edges and tick labels: at most 4 significant figures, no trailing zeros. */
export function short(v: number): string {
  return String(Number(v.toPrecision(4)));
}

export function hz(f: number): string {
  return f >= 1000 ? `${(f / 1000).toPrecision(4)} kHz` : `${f.toPrecision(4)} Hz`;
}

/** Integer with thin-space thousands separators (locale-free). */
export function count(n: number): string {
  return String(Math.round(n)).replace(/\B(?=(\d{3})+(?!\d))/g, '\u2009');
}
