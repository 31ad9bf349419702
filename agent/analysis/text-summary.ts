// The readable summary `floorline analyze` prints by default: the span and averaging, then per channel the total
// RMS, the floor density (median ASD over the non-DC bins, robust to a few spurs) with its confidence interval,
// each band's RMS, and what was asked for (lines, cumulative RMS, mask verdict, noise figure), with SI prefixes.
import { densityIntervalFactors } from '../../dsp/logfreq/confidence.ts';
import { rmsToDbfs, rmsToLsb, powerRatioDb } from '../../dsp/units.ts';
import type { AnalysisReport, ChannelReport } from './report.ts';
import { formatSi } from '../../protocol/si.ts';

/** Median of asd[1..] (DC excluded). */
export function medianFloor(asd: Float64Array): number {
  const v = Float64Array.from(asd.subarray(1)).sort();
  const n = v.length;
  return n % 2 ? v[(n - 1) / 2] : (v[n / 2 - 1] + v[n / 2]) / 2;
}

/** "V/√Hz (input)" or "V/√Hz": the density unit with the point it is referred to. */
export function densityUnit(ch: Pick<ChannelReport, 'unit' | 'referredTo'>): string {
  return `${ch.unit}/√Hz${ch.referredTo === 'input' ? ' (input)' : ''}`;
}

export function amplitudeUnit(ch: Pick<ChannelReport, 'unit' | 'referredTo'>): string {
  return `${ch.unit}${ch.referredTo === 'input' ? ' (input)' : ''}`;
}

const row = (label: string, value: string): string => `  ${label.padEnd(30)} ${value}`;

function shortNumber(x: number): string {
  return String(Number(x.toPrecision(4)));
}

function bandLabel(low: number, high: number): string {
  return `${shortNumber(low)}–${shortNumber(high)} Hz`;
}

function channelLines(r: AnalysisReport, ch: ChannelReport): string[] {
  const s = r.settings;
  const out = ['', `${ch.name} [${amplitudeUnit(ch)}${ch.gain !== undefined ? `, gain ${ch.gain} removed` : ''}]`];
  const du = densityUnit(ch);
  const au = amplitudeUnit(ch);
  out.push(row('total RMS (DC excluded)', formatSi(ch.rms, au)));
  const floor = medianFloor(ch.asd);
  const ci = densityIntervalFactors(2 * s.equivalentAverages, 0.95);
  // A bin's density S lies in [Ŝ·lower, Ŝ·upper] (χ² with ν = 2·K_eq); the ASD interval is its square root.
  out.push(
    row(
      'floor density (median ASD)',
      `${formatSi(floor, du)} (95 % interval of a bin: ${formatSi(floor * Math.sqrt(ci.lower), du)} to ${formatSi(floor * Math.sqrt(ci.upper), du)})`,
    ),
  );
  // The same floor re the converter, at the ADC (× gain when input-referred): dBFS/√Hz re a full-scale sine's RMS
  // (AES17, dsp/units.ts) and LSB/√Hz.
  const atAdc = floor * (ch.gain ?? 1);
  const views = [
    ch.fullScale !== undefined ? `${rmsToDbfs(atAdc, ch.fullScale).toFixed(1)} dBFS/√Hz` : '',
    ch.lsb !== undefined ? `${rmsToLsb(atAdc, ch.lsb).toPrecision(3)} LSB/√Hz` : '',
  ].filter(Boolean);
  if (views.length > 0) out.push(row('  at the ADC', views.join(', ')));
  for (const b of ch.bands) out.push(row(`band ${bandLabel(b.low, b.high)} RMS`, formatSi(b.rms, au)));
  if (ch.clippedSamples > 0) out.push(row('clipped samples', String(ch.clippedSamples)));
  if (ch.missingSamples > 0) out.push(row('missing (non-finite) samples', String(ch.missingSamples)));
  if (ch.cumulativeRms) {
    const c = ch.cumulativeRms;
    const f = ch.frequency;
    const marks: string[] = [];
    for (let d = 10 ** Math.ceil(Math.log10(f[1])); d < f[f.length - 1]; d *= 10) {
      const k = Math.min(f.length - 1, Math.floor(d / s.binHz));
      marks.push(`≤${d >= 1000 ? `${d / 1000} k` : `${d} `}Hz ${formatSi(c[k], au)}`);
    }
    marks.push(`≤Nyquist ${formatSi(c[c.length - 1], au)}`);
    out.push(row(`cumulative RMS from ${f[1].toPrecision(3)} Hz`, marks.join(', ')));
  }
  if (ch.lines) {
    out.push(row('lines above the local floor', ch.lines.length === 0 ? 'none' : `${ch.lines.length}`));
    for (const l of ch.lines) {
      const what = l.harmonic ? `mains harmonic ${l.harmonic}` : 'line';
      out.push(
        `    ${l.frequency.toFixed(2).padStart(10)} Hz  ${formatSi(l.amplitude, `${au} rms`).padEnd(16)} ${l.dbOverFloor.toFixed(1).padStart(6)} dB over floor  ${what}`,
      );
    }
  }
  if (ch.mask) {
    const m = ch.mask;
    const verdict = (v: { pass: boolean; worstMarginDb: number; worstFrequency: number; bins: number }): string =>
      v.bins === 0
        ? 'not covered by the mask'
        : `${v.pass ? 'pass' : 'FAIL'}, worst margin ${v.worstMarginDb.toFixed(2)} dB at ${v.worstFrequency.toPrecision(5)} Hz`;
    out.push(row('limit mask', verdict(m)));
    for (const b of m.bands) out.push(row(`  mask, band ${bandLabel(b.low, b.high)}`, verdict(b)));
  }
  if (ch.budget) {
    const b = ch.budget;
    out.push(
      row(
        'noise budget (metadata)',
        `${formatSi(b.total, du)} = √(${b.parts.map((p) => `${p.name} ${formatSi(p.density, '')}`.trimEnd()).join('² + ')}²)`,
      ),
    );
    out.push(
      row(
        `  measured near ${b.at} Hz`,
        `${formatSi(b.measured, du)}: ${b.differenceDb >= 0 ? '+' : ''}${b.differenceDb.toFixed(2)} dB against the budget`,
      ),
    );
  }
  if (ch.noiseFigure) {
    const nf = ch.noiseFigure;
    out.push(
      row(
        'source',
        `${formatSi(nf.sourceOhms, 'Ω')} at ${nf.sourceKelvin} K: Johnson ${formatSi(nf.sourceDensity, 'V/√Hz')}`,
      ),
    );
    for (const b of nf.bands) {
      out.push(
        row(
          `  NF, band ${bandLabel(b.low, b.high)}`,
          `${b.noiseFigureDb.toFixed(2)} dB, T_e ${b.noiseTemperature.toPrecision(3)} K (mean density ${formatSi(b.density, du)})`,
        ),
      );
    }
  }
  return out;
}

export function formatTextSummary(r: AnalysisReport, warnings: readonly string[] = []): string {
  const s = r.settings;
  const seconds = r.samples / r.sampleRate;
  const ci = densityIntervalFactors(2 * s.equivalentAverages, 0.95);
  const ciDb = `${powerRatioDb(ci.lower).toFixed(2)} / +${powerRatioDb(ci.upper).toFixed(2)} dB`;
  const lines = [
    `${r.file}: ${r.samples} samples at ${r.sampleRate} Hz (${seconds.toPrecision(4)} s, t = ${s.span.from.toFixed(3)}–${s.span.to.toFixed(3)} s), ${r.channels.length} channel(s)`,
    `settings: segment ${s.segment} (bins of ${s.binHz.toPrecision(4)} Hz), window ${s.window} (NENBW ${s.nenbw.toFixed(3)} bins = ` +
      `${s.enbwHz.toPrecision(4)} Hz), overlap ${s.overlap}, detrend ${s.detrend}`,
    `averaging: ${s.average}${s.average === 'median' ? ' (bias-corrected as scipy.signal.welch)' : ''} of ${s.averages} segments` +
      `${s.excludedSegments > 0 ? ` (${s.excludedSegments} left out: they touch clipped or missing samples)` : ''}; ` +
      `${s.equivalentAverages.toPrecision(4)} equivalent averages, 95 % interval of a bin's density ${ciDb}`,
  ];
  for (const w of warnings) lines.push(`warning: ${w}`);
  for (const ch of r.channels) lines.push(...channelLines(r, ch));
  if (r.coherence) {
    for (const c of r.coherence) {
      let best = 1;
      for (let k = 2; k < c.coherence.length - 1; k++) if (c.coherence[k] > c.coherence[best]) best = k;
      lines.push(
        '',
        `coherence ${c.a}–${c.b}: highest ${c.coherence[best].toFixed(3)} at ${c.frequency[best].toPrecision(5)} Hz (magnitude-squared; --json or --csv for every bin)`,
      );
    }
  }
  return lines.join('\n') + '\n';
}
