// Trend output as CSV (one row per channel, band and interval, with the channel's floor density beside the band
// RMS; units in the column names; gap as 0/1 so numeric readers take every column but the text ones) and as a
// terminal table.
import { formatSi } from '../../protocol/si.ts';
import type { TrendResult, TrendRow } from './trend-query.ts';

/** A CSV field: quoted when it holds a delimiter, quote or line break (RFC 4180). */
function field(text: string): string {
  return /[",\r\n]/.test(text) ? `"${text.replace(/"/g, '""')}"` : text;
}

/** Column-name form of a unit: letters, digits and underscores only (so readers keep the name as written). */
export function unitName(unit: string): string {
  return unit
    .replace(/\//g, '_per_')
    .replace(/√/g, 'rt')
    .replace(/[^A-Za-z0-9_]/g, '_');
}

const num = (v: number | null): string => (v === null ? 'nan' : String(v));

export function trendCsv(r: TrendResult): string {
  const bands = r.series.filter((s) => s.quantity === 'bandRms');
  const units = [...new Set(bands.map((s) => s.unit))];
  if (units.length > 1)
    throw new RangeError(
      `the channels chosen have different units (${units.join(', ')}); pick one with --channel NAME for CSV`,
    );
  const u = unitName(units[0] ?? 'V');
  const floors = new Map<string, Map<number, TrendRow>>();
  for (const s of r.series.filter((x) => x.quantity === 'floorDensity'))
    floors.set(s.channel, new Map(s.rows.map((row) => [row.sample, row])));
  const lines = [
    `channel,band_low_Hz,band_high_Hz,t_s,sample,wall_time,rms_min_${u},rms_mean_${u},rms_max_${u},floor_density_${u}_per_rtHz,gap`,
  ];
  for (const s of bands) {
    const floor = floors.get(s.channel);
    for (const row of s.rows) {
      const f = floor?.get(row.sample);
      lines.push(
        [
          field(s.channel),
          s.band![0],
          s.band![1],
          row.t,
          row.sample,
          row.wallTime,
          num(row.min),
          num(row.mean),
          num(row.max),
          num(f && !f.gap ? f.mean : null),
          row.gap ? 1 : 0,
        ].join(','),
      );
    }
  }
  return lines.join('\n') + '\n';
}

export function trendTable(r: TrendResult): string {
  const out: string[] = [];
  const floors = new Map(
    r.series
      .filter((s) => s.quantity === 'floorDensity')
      .map((s) => [s.channel, new Map(s.rows.map((row) => [row.sample, row]))]),
  );
  for (const s of r.series.filter((x) => x.quantity === 'bandRms')) {
    out.push(
      `${s.channel}  band ${s.band![0]}–${s.band![1]} Hz  RMS every ${r.every}  (${s.rows.filter((x) => !x.gap).length} rows)`,
    );
    out.push(
      `  ${'t (s)'.padStart(12)}  ${'sample'.padStart(12)}  ${'wall time'.padEnd(24)}  ${'min'.padStart(11)}  ${'mean'.padStart(11)}  ${'max'.padStart(11)}  ${'floor'.padStart(14)}`,
    );
    for (const row of s.rows) {
      if (row.gap) {
        out.push(
          `  ${row.t.toFixed(3).padStart(12)}  ${String(row.sample).padStart(12)}  ${row.wallTime.padEnd(24)}  — gap: no data from here —`,
        );
        continue;
      }
      const f = floors.get(s.channel)?.get(row.sample);
      const fmt = (v: number | null) => (v === null ? '—' : formatSi(v, s.unit)).padStart(11);
      const floor = f && !f.gap && f.mean !== null ? formatSi(f.mean, `${s.unit}/√Hz`) : '—';
      out.push(
        `  ${row.t.toFixed(3).padStart(12)}  ${String(row.sample).padStart(12)}  ${row.wallTime.padEnd(24)}  ${fmt(row.min)}  ${fmt(row.mean)}  ${fmt(row.max)}  ${floor.padStart(14)}`,
      );
    }
    out.push('');
  }
  if (out.length === 0) out.push('no trend rows in this span.');
  return out.join('\n') + '\n';
}
