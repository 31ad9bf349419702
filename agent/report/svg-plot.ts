// Small SVG charts for the report, written as plain SVG text (no DOM): a trend over wall time (log y, breaks at
// gaps, shaded incidents, marked notes) and a spectrum (log-log). Every coordinate is rounded to 0.1 px, so the
// same data always gives the same bytes. Colours and dashes are the dashboard's (dashboard/colours.ts).
import { channelColour, channelDash, withAlpha } from '../../dashboard/colours.ts';
import { esc } from './html-escape.ts';

export interface PlotLine {
  label: string;
  /** x in ms of wall time, y > 0 or null for a gap. */
  points: { x: number; y: number | null }[];
}

export interface PlotOptions {
  title: string;
  unit: string;
  x0: number;
  x1: number;
  /** The channel's index on the dashboard: its colour; the lines take its dash and then the others in turn. */
  channel: number;
  spans?: { from: number; to: number; label: string }[];
  marks?: { x: number; label: string }[];
  formatY: (v: number) => string;
}

const W = 760;
const H = 240;
const L = 70;
const R = 10;
const T = 24;
const B = 36;

/** Line style of the dashboard: the baseline long-dashed, thresholds and masks dotted (dashboard/views/spectrum.ts). */
export const BASELINE_DASH = [8, 4];
export const LIMIT_DASH = [1.5, 3];

/** Pixel columns of a plot's data area: the report merges incident shading and decimates trend lines to these. */
export const PLOT_COLUMNS = W - L - R;

const dashAttr = (d: number[]) => (d.length ? ` stroke-dasharray="${d.join(' ')}"` : '');

/** log10 range of the positive finite values, widened when flat. */
function logRange(values: number[]): [number, number] | undefined {
  let lo = Infinity;
  let hi = -Infinity;
  for (const v of values)
    if (v > 0 && Number.isFinite(v)) {
      const l = Math.log10(v);
      if (l < lo) lo = l;
      if (l > hi) hi = l;
    }
  if (lo > hi) return undefined;
  return hi - lo < 0.2 ? [lo - 0.1, hi + 0.1] : [lo, hi];
}

/** Decades inside [lo, hi] (log10), or the two ends when none falls inside. */
function decadeTicks(lo: number, hi: number): number[] {
  const ticks: number[] = [];
  for (let d = Math.ceil(lo); d <= Math.floor(hi); d++) ticks.push(10 ** d);
  return ticks.length ? ticks : [10 ** lo, 10 ** hi];
}

function frame(
  title: string,
  unit: string,
  lo: number,
  hi: number,
  yv: (y: number) => number,
  formatY: (v: number) => string,
): string[] {
  const parts = [
    `<svg xmlns="http://www.w3.org/2000/svg" viewBox="0 0 ${W} ${H}" width="${W}" height="${H}" role="img" aria-label="${esc(title)}">`,
    `<text x="${L}" y="14" font-size="12" font-weight="bold">${esc(title)}</text>`,
  ];
  for (const v of decadeTicks(lo, hi)) {
    const y = yv(v).toFixed(1);
    parts.push(
      `<line x1="${L}" x2="${W - R}" y1="${y}" y2="${y}" stroke="#ddd"/><text x="${L - 4}" y="${y}" font-size="10" text-anchor="end" dominant-baseline="middle">${esc(formatY(v))}</text>`,
    );
  }
  parts.push(`<rect x="${L}" y="${T}" width="${W - L - R}" height="${H - T - B}" fill="none" stroke="#999"/>`);
  parts.push(
    `<text x="12" y="${(T + H - B) / 2}" font-size="10" transform="rotate(-90 12 ${(T + H - B) / 2})" text-anchor="middle">${esc(unit)}</text>`,
  );
  return parts;
}

function path(points: { x: number; y: number | null }[], xs: (x: number) => number, yv: (y: number) => number): string {
  let d = '';
  let pen = false;
  for (const p of points) {
    if (p.y === null || !(p.y > 0) || !Number.isFinite(p.y)) {
      pen = false;
      continue;
    }
    d += `${pen ? 'L' : 'M'}${xs(p.x).toFixed(1)} ${yv(p.y).toFixed(1)}`;
    pen = true;
  }
  return d;
}

const drawable = (y: number | null): y is number => y !== null && y > 0 && Number.isFinite(y);

/**
 * At most four points per pixel column (its first, lowest, highest and last, in their order), so a line of any
 * length draws in bounded text and a one-row spike still reaches its height; a gap ends the column and lifts the pen.
 */
export function columnEnvelope(
  points: { x: number; y: number | null }[],
  xs: (x: number) => number,
): { x: number; y: number | null }[] {
  const out: { x: number; y: number | null }[] = [];
  let col = NaN;
  let picks: { x: number; y: number; at: number }[] = [];
  const flush = () => {
    if (picks.length === 0) return;
    const [first, lo, hi, last] = picks;
    const chosen = [...new Set([first, lo, hi, last])].sort((a, b) => a.at - b.at);
    for (const p of chosen) out.push({ x: p.x, y: p.y });
    picks = [];
  };
  points.forEach((p, at) => {
    if (!drawable(p.y)) {
      flush();
      col = NaN;
      if (out.length && out[out.length - 1].y !== null) out.push({ x: p.x, y: null });
      return;
    }
    const c = Math.floor(xs(p.x));
    if (c !== col) {
      flush();
      col = c;
    }
    const q = { x: p.x, y: p.y, at };
    if (picks.length === 0) picks = [q, q, q, q];
    else {
      if (q.y < picks[1].y) picks[1] = q;
      if (q.y > picks[2].y) picks[2] = q;
      picks[3] = q;
    }
  });
  flush();
  return out;
}

export function linePlot(lines: PlotLine[], o: PlotOptions): string {
  const range = logRange(lines.flatMap((l) => l.points.map((p) => p.y ?? NaN)));
  if (!range) return `<p>${esc(o.title)}: no data in this span.</p>`;
  const [lo, hi] = range;
  const xs = (x: number) => L + ((x - o.x0) / Math.max(1, o.x1 - o.x0)) * (W - L - R);
  const yv = (y: number) => T + (1 - (Math.log10(y) - lo) / (hi - lo)) * (H - T - B);
  const parts = frame(o.title, o.unit, lo, hi, yv, o.formatY);
  for (const s of o.spans ?? []) {
    const a = Math.max(L, xs(s.from));
    const b = Math.min(W - R, xs(s.to));
    if (b > a)
      parts.push(
        `<rect x="${a.toFixed(1)}" y="${T}" width="${Math.max(1, b - a).toFixed(1)}" height="${H - T - B}" fill="#f4c542" fill-opacity="0.25"><title>${esc(s.label)}</title></rect>`,
      );
  }
  for (let i = 0; i <= 4; i++) {
    const x = o.x0 + ((o.x1 - o.x0) * i) / 4;
    const label = new Date(x).toISOString().replace('T', ' ').slice(0, 19);
    parts.push(
      `<text x="${xs(x).toFixed(1)}" y="${H - B + 14}" font-size="10" text-anchor="${i === 0 ? 'start' : i === 4 ? 'end' : 'middle'}">${esc(label)}</text>`,
    );
  }
  const colour = channelColour(o.channel);
  lines.forEach((line, i) => {
    const d = path(columnEnvelope(line.points, xs), xs, yv);
    const dash = dashAttr(channelDash(o.channel + i));
    if (d) parts.push(`<path d="${d}" fill="none" stroke="${colour}" stroke-width="1.25"${dash}/>`);
    parts.push(
      `<line x1="${L + 6 + i * 150}" x2="${L + 26 + i * 150}" y1="${T + 9}" y2="${T + 9}" stroke="${colour}"${dash}/><text x="${L + 30 + i * 150}" y="${T + 12}" font-size="10" fill="${colour}">${esc(line.label)}</text>`,
    );
  });
  for (const m of o.marks ?? []) {
    const x = xs(m.x).toFixed(1);
    parts.push(
      `<line x1="${x}" x2="${x}" y1="${T}" y2="${H - B}" stroke="#555" stroke-dasharray="3 2"><title>${esc(m.label)}</title></line>`,
    );
  }
  parts.push('</svg>');
  return parts.join('');
}

export interface SpectrumLine {
  label: string;
  kind: 'measured' | 'baseline' | 'limit';
  frequency: Float64Array;
  /** unit/√Hz; NaN where undefined (a mask outside its span). */
  asd: Float64Array;
}

/** The largest value in each pixel column (lines stay visible), for a log-frequency axis. */
function columnMax(f: Float64Array, v: Float64Array, xs: (x: number) => number): { x: number; y: number | null }[] {
  const out: { x: number; y: number | null }[] = [];
  let col = -1;
  for (let k = 0; k < f.length; k++) {
    if (!(f[k] > 0)) continue;
    const c = Math.floor(xs(f[k]));
    const y = Number.isFinite(v[k]) && v[k] > 0 ? v[k] : null;
    if (c !== col || out.length === 0) {
      out.push({ x: f[k], y });
      col = c;
    } else {
      const last = out[out.length - 1];
      if (y !== null && (last.y === null || y > last.y)) out[out.length - 1] = { x: last.x, y };
    }
  }
  return out;
}

/** A log-log density plot: the measured spectrum in the channel's style, baseline long-dashed, limits dotted. */
export function spectrumPlot(
  lines: SpectrumLine[],
  o: { title: string; unit: string; channel: number; formatY: (v: number) => string; marker?: number },
): string {
  const all = lines.flatMap((l) => Array.from(l.asd).filter((_, k) => l.frequency[k] > 0));
  const range = logRange(all);
  const fs = lines.flatMap((l) => Array.from(l.frequency).filter((x) => x > 0));
  if (!range || fs.length === 0) return `<p>${esc(o.title)}: no spectrum.</p>`;
  // A little headroom, so a line's peak is not drawn on the frame.
  const lo = range[0];
  const hi = range[1] + 0.05 * (range[1] - range[0]);
  const f0 = Math.log10(Math.min(...fs));
  const f1 = Math.log10(Math.max(...fs));
  const xs = (x: number) => L + ((Math.log10(x) - f0) / Math.max(1e-9, f1 - f0)) * (W - L - R);
  const yv = (y: number) => T + (1 - (Math.log10(y) - lo) / (hi - lo)) * (H - T - B);
  const parts = frame(o.title, o.unit, lo, hi, yv, o.formatY);
  for (const v of decadeTicks(f0, f1)) {
    const x = xs(v).toFixed(1);
    parts.push(
      `<line x1="${x}" x2="${x}" y1="${T}" y2="${H - B}" stroke="#eee"/><text x="${x}" y="${H - B + 14}" font-size="10" text-anchor="middle">${esc(hzLabel(v))}</text>`,
    );
  }
  if (o.marker !== undefined && o.marker > 0) {
    const x = xs(o.marker).toFixed(1);
    parts.push(`<line x1="${x}" x2="${x}" y1="${T}" y2="${H - B}" stroke="#555" stroke-dasharray="3 2"/>`);
  }
  const colour = channelColour(o.channel);
  lines.forEach((line, i) => {
    const style =
      line.kind === 'measured'
        ? { stroke: colour, dash: channelDash(o.channel), width: 1.25 }
        : line.kind === 'baseline'
          ? { stroke: withAlpha(colour, 0.8), dash: BASELINE_DASH, width: 1 }
          : { stroke: '#b00020', dash: LIMIT_DASH, width: 1.5 };
    const d = path(columnMax(line.frequency, line.asd, xs), xs, yv);
    const attrs = `fill="none" stroke="${style.stroke}" stroke-width="${style.width}"${dashAttr(style.dash)}`;
    if (d) parts.push(`<path d="${d}" ${attrs}/>`);
    parts.push(
      `<line x1="${L + 6 + i * 170}" x2="${L + 26 + i * 170}" y1="${T + 9}" y2="${T + 9}" ${attrs}/><text x="${L + 30 + i * 170}" y="${T + 12}" font-size="10">${esc(line.label)}</text>`,
    );
  });
  parts.push(`<text x="${W - R}" y="${H - 4}" font-size="10" text-anchor="end">frequency</text>`);
  parts.push('</svg>');
  return parts.join('');
}

function hzLabel(v: number): string {
  return v >= 1000 ? `${+(v / 1000).toPrecision(3)} kHz` : `${+v.toPrecision(3)} Hz`;
}
