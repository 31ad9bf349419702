// A small SVG line chart for the report: log-scaled y, time on x, breaks where the series has gaps, shaded spans
// (incidents) and marked instants (notes). Plain SVG text, no DOM; colours follow the dashboard's traces.
import { esc } from './html-escape.ts';

export const TRACE_COLOURS = ['#1f77b4', '#d62728', '#2ca02c', '#9467bd', '#ff7f0e', '#17becf', '#8c564b', '#e377c2'];

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

export function linePlot(lines: PlotLine[], o: PlotOptions): string {
  const ys = lines
    .flatMap((l) => l.points.map((p) => p.y))
    .filter((y): y is number => y !== null && y > 0 && Number.isFinite(y));
  if (ys.length === 0) return `<p>${esc(o.title)}: no data in this span.</p>`;
  let lo = Math.log10(Math.min(...ys));
  let hi = Math.log10(Math.max(...ys));
  if (hi - lo < 0.2) {
    lo -= 0.1;
    hi += 0.1;
  }
  const xs = (x: number) => L + ((x - o.x0) / Math.max(1, o.x1 - o.x0)) * (W - L - R);
  const yv = (y: number) => T + (1 - (Math.log10(y) - lo) / (hi - lo)) * (H - T - B);
  const parts: string[] = [
    `<svg xmlns="http://www.w3.org/2000/svg" viewBox="0 0 ${W} ${H}" width="${W}" height="${H}" role="img" aria-label="${esc(o.title)}">`,
  ];
  parts.push(`<text x="${L}" y="14" font-size="12" font-weight="bold">${esc(o.title)}</text>`);
  for (const s of o.spans ?? []) {
    const a = Math.max(L, xs(s.from));
    const b = Math.min(W - R, xs(s.to));
    if (b > a)
      parts.push(
        `<rect x="${a.toFixed(1)}" y="${T}" width="${Math.max(1, b - a).toFixed(1)}" height="${H - T - B}" fill="#f4c542" fill-opacity="0.25"><title>${esc(s.label)}</title></rect>`,
      );
  }
  // Decade grid and labels (the range's ends when no decade falls inside it).
  const ticks: number[] = [];
  for (let d = Math.ceil(lo); d <= Math.floor(hi); d++) ticks.push(10 ** d);
  if (ticks.length === 0) ticks.push(10 ** lo, 10 ** hi);
  for (const v of ticks) {
    const y = yv(v).toFixed(1);
    parts.push(
      `<line x1="${L}" x2="${W - R}" y1="${y}" y2="${y}" stroke="#ddd"/><text x="${L - 4}" y="${y}" font-size="10" text-anchor="end" dominant-baseline="middle">${esc(o.formatY(v))}</text>`,
    );
  }
  parts.push(`<rect x="${L}" y="${T}" width="${W - L - R}" height="${H - T - B}" fill="none" stroke="#999"/>`);
  for (let i = 0; i <= 4; i++) {
    const x = o.x0 + ((o.x1 - o.x0) * i) / 4;
    const label = new Date(x).toISOString().replace('T', ' ').slice(0, 19);
    parts.push(
      `<text x="${xs(x).toFixed(1)}" y="${H - B + 14}" font-size="10" text-anchor="${i === 0 ? 'start' : i === 4 ? 'end' : 'middle'}">${esc(label)}</text>`,
    );
  }
  lines.forEach((line, i) => {
    let d = '';
    let pen = false;
    for (const p of line.points) {
      if (p.y === null || !(p.y > 0)) {
        pen = false;
        continue;
      }
      d += `${pen ? 'L' : 'M'}${xs(p.x).toFixed(1)} ${yv(p.y).toFixed(1)}`;
      pen = true;
    }
    const colour = TRACE_COLOURS[i % TRACE_COLOURS.length];
    if (d) parts.push(`<path d="${d}" fill="none" stroke="${colour}" stroke-width="1.2"/>`);
    parts.push(`<text x="${L + 6 + i * 150}" y="${T + 12}" font-size="10" fill="${colour}">${esc(line.label)}</text>`);
  });
  for (const m of o.marks ?? []) {
    const x = xs(m.x).toFixed(1);
    parts.push(
      `<line x1="${x}" x2="${x}" y1="${T}" y2="${H - B}" stroke="#555" stroke-dasharray="3 2"><title>${esc(m.label)}</title></line>`,
    );
  }
  parts.push(
    `<text x="12" y="${(T + H - B) / 2}" font-size="10" transform="rotate(-90 12 ${(T + H - B) / 2})" text-anchor="middle">${esc(o.unit)}</text>`,
  );
  parts.push('</svg>');
  return parts.join('');
}
