// The readable summary `floorline analyze` prints by default: per channel the total RMS, the floor density
// (median ASD over the non-DC bins, robust to a few spurs) and each band's RMS, with SI prefixes.
import type { AnalysisReport } from './report.ts';
import { formatSi } from './si.ts';

/** Median of asd[1..] (DC excluded). */
export function medianFloor(asd: Float64Array): number {
  const v = Float64Array.from(asd.subarray(1)).sort();
  const n = v.length;
  return n % 2 ? v[(n - 1) / 2] : (v[n / 2 - 1] + v[n / 2]) / 2;
}

export function formatTextSummary(r: AnalysisReport, warnings: readonly string[] = []): string {
  const s = r.settings;
  const seconds = r.samples / r.sampleRate;
  const lines = [
    `${r.file}: ${r.samples} samples at ${r.sampleRate} Hz (${seconds.toPrecision(4)} s), ${r.channels.length} channel(s)`,
    `settings: segment ${s.segment} (bins of ${s.binHz.toPrecision(4)} Hz), window ${s.window} (NENBW ${s.nenbw.toFixed(3)} bins = ` +
      `${s.enbwHz.toPrecision(4)} Hz), overlap ${s.overlap}, detrend ${s.detrend}, ${s.averages} averages`,
  ];
  for (const w of warnings) lines.push(`warning: ${w}`);
  for (const ch of r.channels) {
    lines.push('', `${ch.name} [${ch.unit}]`);
    lines.push(`  ${'total RMS (DC excluded)'.padEnd(28)} ${formatSi(ch.rms, ch.unit)}`);
    lines.push(`  ${'floor density (median ASD)'.padEnd(28)} ${formatSi(medianFloor(ch.asd), `${ch.unit}/√Hz`)}`);
    for (const b of ch.bands) lines.push(`  ${`band ${b.low}–${b.high} Hz RMS`.padEnd(28)} ${formatSi(b.rms, ch.unit)}`);
  }
  return lines.join('\n') + '\n';
}
