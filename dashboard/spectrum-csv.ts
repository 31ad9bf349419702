// The current spectrum as text: its context line and the CSV export (spectral context in '#' header lines, a units
// row, '.' decimals). No DOM here, so tests run it as it is.
import type { SpectrumContext } from '../protocol/messages.ts';
import type { DecodedFrame } from '../protocol/frame.ts';
import { densityLabel, fromPsd, isConverterUnit, type DensityUnit } from './units.ts';
import { referralSuffix, type ReferredTo } from './referral.ts';

function averagingText(ctx: SpectrumContext): string {
  const a = ctx.averaging;
  if (a.mode === 'rolling' || a.mode === 'median') return `${a.mode} ${a.count}`;
  if (a.mode === 'exponential') return `exponential tau ${a.tauSeconds} s`;
  return a.mode;
}

export function contextLine(ctx: SpectrumContext, f: DecodedFrame | null): string {
  const s = ctx.settings;
  const avg = f
    ? Array.from(f.averages)
        .map((a) => a.toFixed(1))
        .join('/')
    : '—';
  return `${s.window} window · ENBW ${ctx.nenbw.toFixed(3)} bins = ${ctx.enbwHz.toPrecision(4)} Hz (RBW) · bin ${ctx.binHz.toPrecision(4)} Hz · segment ${s.segment} · overlap ${(s.overlap * 100).toFixed(1)} % · detrend ${s.detrend} · averaging ${averagingText(ctx)} · equivalent averages ${avg}${f ? ` · t = ${(f.sample / f.sampleRate).toFixed(2)} s (sample ${f.sample})` : ''}`;
}

/**
 * CSV text; numbers via String() (shortest round-trip, '.' decimal whatever the locale). `refer.factors` are the
 * factors on the received PSD for the unit shown (referral, and the converter's scale for dBFS or LSB).
 */
export function spectrumCsv(
  ctx: SpectrumContext,
  f: DecodedFrame,
  units: DensityUnit,
  wallTime: string,
  refer: { view: ReferredTo; factors: readonly number[] } = { view: 'adc', factors: [] },
): string {
  const s = ctx.settings;
  const converter = isConverterUnit(units);
  const lines = [
    '# floorline spectrum',
    `# sample,${f.sample}`,
    `# t_s,${f.sample / f.sampleRate}`,
    `# wall_time,${wallTime}`,
    `# sample_rate_hz,${s.sampleRate}`,
    `# segment,${s.segment}`,
    `# window,${s.window}`,
    `# overlap,${s.overlap}`,
    `# detrend,${s.detrend}`,
    `# nenbw_bins,${ctx.nenbw}`,
    `# enbw_hz,${ctx.enbwHz}`,
    `# bin_hz,${ctx.binHz}`,
    `# averaging,${averagingText(ctx)}`,
    `# equivalent_averages,${Array.from(f.averages).join(',')}`,
    `# scaling,one-sided density (DC and Nyquist not doubled)`,
    ['frequency', ...ctx.channels.map((c) => c.name)].join(','),
    `# referred_to,${converter ? 'adc (re the converter)' : ctx.channels.some((c) => c.front?.gain !== undefined) ? refer.view : 'as received'}`,
    [
      'Hz',
      ...ctx.channels.map((c) => densityLabel(units, c.unit) + (converter ? '' : referralSuffix(c.front, refer.view))),
    ].join(','),
  ];
  for (let k = 0; k < f.length; k++) {
    const row = [String(k * f.binHz)];
    for (let c = 0; c < f.channels; c++) {
      const v = fromPsd(units, f.values[c][k] * (refer.factors[c] ?? 1));
      row.push(v === null ? '' : String(v));
    }
    lines.push(row.join(','));
  }
  return lines.join('\n') + '\n';
}
