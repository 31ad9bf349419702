// Exports: the current spectrum as CSV (spectral context in '#' header lines, a units row, '.' decimals) and as
// PNG (the chart canvas with its context line), and the event log as JSON Lines.
import type { SpectrumContext } from '../protocol/messages.ts';
import type { DecodedFrame } from '../protocol/frame.ts';
import { densityLabel, fromPsd, type DensityUnit } from './units.ts';
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

/** CSV text; numbers via String() (shortest round-trip, '.' decimal whatever the locale). */
export function spectrumCsv(
  ctx: SpectrumContext,
  f: DecodedFrame,
  units: DensityUnit,
  wallTime: string,
  refer: { view: ReferredTo; factors: readonly number[] } = { view: 'adc', factors: [] },
): string {
  const s = ctx.settings;
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
    `# referred_to,${ctx.channels.some((c) => c.front?.gain !== undefined) ? refer.view : 'as received'}`,
    ['Hz', ...ctx.channels.map((c) => densityLabel(units, c.unit) + referralSuffix(c.front, refer.view))].join(','),
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

/** One legend entry of the PNG: a channel's name, its colour and its line style. */
export interface PngLegendEntry {
  label: string;
  colour: string;
  dash: number[];
}

/** Height in CSS px of the caption block under the chart: the legend row, then the context and time line. */
export const PNG_CAPTION_PX = 44;

/** The chart canvas on white with, under it, a legend (channel names, colours, dashes, the density unit) and the
 *  context line with the time, so the image stands on its own in a report or a ticket. */
export function spectrumPng(
  chart: HTMLCanvasElement,
  caption: string,
  legend: PngLegendEntry[] = [],
  unitLabel = '',
): Promise<Blob> {
  const scale = chart.width / chart.clientWidth || 1;
  const pad = Math.round(PNG_CAPTION_PX * scale);
  const out = document.createElement('canvas');
  out.width = chart.width;
  out.height = chart.height + pad;
  const c = out.getContext('2d')!;
  c.fillStyle = '#ffffff';
  c.fillRect(0, 0, out.width, out.height);
  c.drawImage(chart, 0, 0);
  c.font = `${Math.round(12 * scale)}px system-ui, sans-serif`;
  c.textBaseline = 'middle';
  let x = 8 * scale;
  const y = chart.height + 12 * scale;
  for (const e of legend) {
    c.strokeStyle = e.colour;
    c.lineWidth = 2 * scale;
    c.setLineDash(e.dash.map((d) => d * scale));
    c.beginPath();
    c.moveTo(x, y);
    c.lineTo(x + 24 * scale, y);
    c.stroke();
    c.setLineDash([]);
    c.fillStyle = '#1c2630';
    c.fillText(e.label, x + 30 * scale, y);
    x += 30 * scale + c.measureText(e.label).width + 16 * scale;
  }
  if (unitLabel) c.fillText(`density in ${unitLabel}`, x, y);
  c.fillStyle = '#1c2630';
  c.fillText(caption, 8 * scale, chart.height + 32 * scale, out.width - 16 * scale);
  return new Promise((resolve, reject) =>
    out.toBlob((b) => (b ? resolve(b) : reject(new Error('PNG export failed'))), 'image/png'),
  );
}

export function download(name: string, data: Blob | string, type = 'text/plain'): void {
  const blob = typeof data === 'string' ? new Blob([data], { type }) : data;
  const a = document.createElement('a');
  a.href = URL.createObjectURL(blob);
  a.download = name;
  document.body.appendChild(a);
  a.click();
  a.remove();
  setTimeout(() => URL.revokeObjectURL(a.href), 10_000);
}
