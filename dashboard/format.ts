// Number formatting for the dashboard: engineering prefixes for readings, '.' decimals everywhere.
import { formatSi } from '../protocol/si.ts';

/** 1.23e-6, 'V' → "1.23 µV"; keeps `digits` significant figures; '—' when there is no number. */
export function si(value: number | null | undefined, unit: string, digits = 3): string {
  return value === null || value === undefined || !Number.isFinite(value) ? '—' : formatSi(value, unit, digits);
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
