// The timeline: band RMS (or floor density) of one channel over the last hour, day or week from the agent's
// history store, with incidents as shaded spans, notes as markers and gaps (agent down, link lost) as breaks.
// The store downsamples to the chart's pixel width, so a week of minute rows draws as fast as an hour.
import uPlot from 'uplot';
import type { TrendReply, TrendSeriesJson } from '../../protocol/trend.ts';
import type { IncidentJson } from '../../protocol/incidents.ts';
import { channelColour, channelDash, withAlpha } from '../colours.ts';
import { short, si } from '../format.ts';
import { siAxis } from './si-axis.ts';

export const SPANS: Record<string, { seconds: number; every: string }> = {
  hour: { seconds: 3600, every: '1s' },
  day: { seconds: 86_400, every: '1m' },
  week: { seconds: 7 * 86_400, every: '1m' },
};

export interface TimelineQuery {
  channel: string;
  /** "LO:HI" for a band's RMS, or "floor" for the floor density. */
  what: string;
  span: keyof typeof SPANS;
}

/** The span a query ending now covers, as /api TIME bounds. A live run's span ends at the wall clock; a replay's
 *  ends at its newest sample (`sampleNow`, seconds of sample time), since its wall-time labels come from the
 *  recording. */
export function timelineSpan(
  q: TimelineQuery,
  sampleNow: number | null = null,
  now = Date.now(),
): { from: string; to: string } {
  const seconds = SPANS[q.span].seconds;
  return sampleNow === null
    ? { from: new Date(now - seconds * 1000).toISOString(), to: new Date(now).toISOString() }
    : { from: `t=${Math.max(0, sampleNow - seconds)}`, to: `t=${sampleNow}` };
}

/** The /api/trend URL for a query over `span` (timelineSpan), at most `points` rows per series. */
export function trendUrl(q: TimelineQuery, points: number, span: { from: string; to: string }): string {
  const p = new URLSearchParams({
    channel: q.channel,
    from: span.from,
    to: span.to,
    every: SPANS[q.span].every,
    points: String(Math.max(10, Math.min(10_000, Math.round(points)))),
  });
  if (q.what !== 'floor') p.set('band', q.what);
  return `api/trend?${p.toString()}`;
}

/** The series a query asks for out of a reply (band RMS of that band, or the floor density). */
export function pickSeries(reply: TrendReply, q: TimelineQuery): TrendSeriesJson | null {
  return (
    reply.series.find(
      (s) =>
        s.channel === q.channel &&
        (q.what === 'floor'
          ? s.quantity === 'floorDensity'
          : s.quantity === 'bandRms' &&
            s.band !== null &&
            `${short(s.band[0])}:${short(s.band[1])}` ===
              q.what
                .split(':')
                .map((x) => short(Number(x)))
                .join(':')),
    ) ?? null
  );
}

export class TimelineView {
  private plot: uPlot | null = null;
  private data: (number | null)[][] = [[], [], [], []];
  private incidents: IncidentJson[] = [];
  private notes: { wall: number; text: string }[] = [];
  private unit = 'V';
  private colourIndex = 0;
  /** Wall time (ms) the last draw took, for the benchmark and tests. */
  lastDrawMs = 0;
  series: TrendSeriesJson | null = null;
  /** Told of a click on the chart (or Enter on the keyboard cursor): wall time in s, and the incident there. */
  onPick: ((wallSeconds: number, incident: IncidentJson | null) => void) | null = null;
  /** Row the keyboard cursor is on (← → move it, Enter picks it). */
  private keyRow = -1;

  constructor(
    private readonly el: HTMLElement,
    private readonly info: HTMLElement,
  ) {
    new ResizeObserver(() => this.plot?.setSize({ width: Math.max(300, this.el.clientWidth), height: 220 })).observe(
      el,
    );
    el.addEventListener('keydown', (e) => this.onKey(e));
  }

  /** The incident whose span holds wall time `x` (s), the newest first; open ones run to now. */
  incidentAt(x: number): IncidentJson | null {
    for (let k = this.incidents.length - 1; k >= 0; k--) {
      const i = this.incidents[k];
      const a = Date.parse(i.start.wallTime) / 1000;
      const b = i.end ? Date.parse(i.end.wallTime) / 1000 : Infinity;
      if (x >= a && x <= b) return i;
    }
    return null;
  }

  private pick(x: number): void {
    this.onPick?.(x, this.incidentAt(x));
  }

  private onKey(e: KeyboardEvent): void {
    const xs = this.data[0] as number[];
    const u = this.plot;
    if (!u || xs.length === 0) return;
    if (e.key === 'ArrowLeft' || e.key === 'ArrowRight') {
      e.preventDefault();
      const step = e.key === 'ArrowLeft' ? -1 : 1;
      this.keyRow = Math.max(0, Math.min(xs.length - 1, (this.keyRow < 0 ? xs.length : this.keyRow) + step));
      u.setCursor({ left: u.valToPos(xs[this.keyRow], 'x'), top: u.bbox.height / (2 * devicePixelRatio) });
    } else if (e.key === 'Enter' && this.keyRow >= 0) {
      e.preventDefault();
      this.pick(xs[this.keyRow]);
    }
  }

  /** A click (not the end of a drag-zoom) picks the time under the pointer. */
  private listen(u: uPlot): void {
    let down: { x: number; y: number } | null = null;
    u.over.addEventListener('mousedown', (e) => (down = { x: e.clientX, y: e.clientY }));
    u.over.addEventListener('click', (e) => {
      if (down && Math.hypot(e.clientX - down.x, e.clientY - down.y) > 3) return;
      this.pick(u.posToVal(e.offsetX, 'x'));
    });
  }

  /** Shows one series; rows marked as gaps become breaks in the line (null values, spanGaps off). */
  show(s: TrendSeriesJson | null, incidents: IncidentJson[], colourIndex: number): void {
    const t0 = performance.now();
    this.series = s;
    this.incidents = incidents;
    this.colourIndex = colourIndex;
    this.notes = incidents.flatMap((i) => i.notes.map((n) => ({ wall: Date.parse(n.wallTime) / 1000, text: n.text })));
    const rows = s?.rows ?? [];
    const x: number[] = [];
    const mean: (number | null)[] = [];
    const lo: (number | null)[] = [];
    const hi: (number | null)[] = [];
    for (const r of rows) {
      x.push(Date.parse(r.wallTime) / 1000);
      const ok = !r.gap && r.mean !== null && r.mean > 0;
      mean.push(ok ? r.mean : null);
      lo.push(ok && r.min !== null && r.min > 0 ? r.min : null);
      hi.push(ok && r.max !== null && r.max > 0 ? r.max : null);
    }
    this.data = [x, mean, lo, hi];
    const unit = s
      ? s.quantity === 'floorDensity'
        ? s.unit.includes('√Hz')
          ? s.unit
          : `${s.unit}/√Hz`
        : `${s.unit} rms`
      : 'V';
    if (!this.plot || unit !== this.unit) this.rebuild(unit);
    else this.plot.setData(this.data as uPlot.AlignedData, true);
    const gaps = rows.filter((r) => r.gap).length;
    this.info.textContent = s
      ? `${rows.length} rows (${s.quantity === 'floorDensity' ? 'median floor density' : `band RMS ${s.band ? `${short(s.band[0])}–${short(s.band[1])} Hz` : ''}`}, min/mean/max per row)` +
        `${gaps ? `, ${gaps} gap rows shown as breaks` : ''} · ${incidents.length} incident${incidents.length === 1 ? '' : 's'} shaded · ${this.notes.length} note${this.notes.length === 1 ? '' : 's'} marked`
      : 'no history rows for this choice yet';
    this.lastDrawMs = performance.now() - t0;
  }

  private rebuild(unit: string): void {
    this.unit = unit;
    this.plot?.destroy();
    const col = channelColour(this.colourIndex);
    const fmt = (_u: uPlot, v: number | null): string => (v == null ? '—' : si(v, unit));
    this.plot = new uPlot(
      {
        width: Math.max(300, this.el.clientWidth),
        height: 220,
        pxAlign: 0,
        legend: { show: true, live: true },
        cursor: { drag: { x: true, y: false } },
        scales: { x: { time: true }, y: { distr: 3, log: 10 } },
        axes: [{ stroke: '#5b6670', grid: { stroke: '#e6e1d6' } }, siAxis(unit)],
        series: [
          { label: 'time' },
          { label: 'mean', stroke: col, dash: channelDash(this.colourIndex), width: 1.5, value: fmt, spanGaps: false },
          { label: 'min', stroke: withAlpha(col, 0.35), width: 0.75, value: fmt, spanGaps: false },
          { label: 'max', stroke: withAlpha(col, 0.35), width: 0.75, value: fmt, spanGaps: false },
        ],
        hooks: { drawClear: [(u) => this.drawSpans(u)] },
      },
      this.data as uPlot.AlignedData,
      this.el,
    );
    this.listen(this.plot);
  }

  /** Incidents as shaded spans (open ones to the right edge) and notes as dashed markers, under the traces. */
  private drawSpans(u: uPlot): void {
    const c = u.ctx;
    const { top, height, left, width } = u.bbox;
    const xMin = u.scales.x.min ?? 0;
    const xMax = u.scales.x.max ?? 0;
    c.save();
    for (const i of this.incidents) {
      const a = Date.parse(i.start.wallTime) / 1000;
      const b = i.end ? Date.parse(i.end.wallTime) / 1000 : xMax;
      if (b < xMin || a > xMax) continue;
      const x0 = Math.max(left, u.valToPos(a, 'x', true));
      const x1 = Math.min(left + width, Math.max(x0 + 2, u.valToPos(b, 'x', true)));
      c.fillStyle = i.end ? 'rgba(180, 35, 44, 0.10)' : 'rgba(180, 35, 44, 0.18)';
      c.fillRect(x0, top, x1 - x0, height);
    }
    c.strokeStyle = '#5b6670';
    c.setLineDash([2, 3]);
    for (const n of this.notes) {
      if (n.wall < xMin || n.wall > xMax) continue;
      const px = Math.round(u.valToPos(n.wall, 'x', true)) + 0.5;
      c.beginPath();
      c.moveTo(px, top);
      c.lineTo(px, top + height);
      c.stroke();
    }
    c.restore();
  }

  /** The rows shown, as CSV with units in the header (numpy.genfromtxt and pandas read it as is). */
  csv(): string {
    const s = this.series;
    if (!s) return '';
    const unit = s.quantity === 'floorDensity' ? `${s.unit}/sqrtHz` : s.unit;
    const lines = [`wall_time,t_s,sample,min_${unit},mean_${unit},max_${unit},gap`];
    for (const r of s.rows)
      lines.push([r.wallTime, r.t, r.sample, r.min ?? 'nan', r.mean ?? 'nan', r.max ?? 'nan', r.gap ? 1 : 0].join(','));
    return lines.join('\n') + '\n';
  }
}
