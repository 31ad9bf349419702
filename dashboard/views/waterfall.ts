// Waterfall of recent spectra on its own canvas: newest row at the top (history scrolls down, the way people read
// it), columns on the spectrum chart's own log-frequency axis and plot width, colour by density level in dB re
// the baseline floor, with a colour-scale legend. One row per `snapshotsPerRow` updates (max over them), so the
// canvas spans minutes; per update the work is one pass over the bins and, per row, one scroll and one line.
import { densityLabel } from '../units.ts';
import { columnOf, gridColumns, logColumns } from './waterfall-columns.ts';
import type { StoredSpectrumJson } from '../../protocol/spectra.ts';
import { powerRatioDb } from '../../dsp/units.ts';

/** Colour range around the baseline floor (median density): 10 dB below to 40 dB above. */
export const FLOOR_BELOW_DB = 10;
export const FLOOR_ABOVE_DB = 40;

/** Our own colour ramp: deep ink → blue → teal → sand → paper. */
const STOPS: [number, number, number][] = [
  [16, 24, 43],
  [29, 78, 137],
  [42, 157, 143],
  [233, 196, 106],
  [253, 246, 227],
];

function buildLut(): Uint8ClampedArray {
  const lut = new Uint8ClampedArray(256 * 4);
  for (let i = 0; i < 256; i++) {
    const pos = (i / 255) * (STOPS.length - 1);
    const k = Math.min(STOPS.length - 2, Math.floor(pos));
    const t = pos - k;
    for (let j = 0; j < 3; j++) lut[i * 4 + j] = STOPS[k][j] + (STOPS[k + 1][j] - STOPS[k][j]) * t;
    lut[i * 4 + 3] = 255;
  }
  return lut;
}

/** FLOOR_BELOW_DB under to FLOOR_ABOVE_DB over the median of the positive values from index `from` on (the
 *  floor, not its lines), in whole dB; null when there are none. */
function rangeAroundFloor(values: ArrayLike<number>, from: number): [number, number] | null {
  const v: number[] = [];
  for (let k = from; k < values.length; k++) if (values[k] > 0) v.push(values[k]);
  if (v.length === 0) return null;
  v.sort((a, b) => a - b);
  const floorDb = powerRatioDb(v[v.length >> 1]);
  return [Math.round(floorDb - FLOOR_BELOW_DB), Math.round(floorDb + FLOOR_ABOVE_DB)];
}

export class WaterfallView {
  private readonly lut = buildLut();
  private readonly ctx: CanvasRenderingContext2D;
  private readonly legendCtx: CanvasRenderingContext2D;
  private row: ImageData;
  private colFirst = new Int32Array(0);
  private colLast = new Int32Array(0);
  private acc = new Float64Array(0);
  private accCount = 0;
  private lowDb = -170;
  private highDb = -110;
  private ranged = false;
  /** Set from the baseline's floor or by the user: kept until changed, so page loads look alike. */
  private rangeSource: 'baseline' | 'user' | 'first row' | null = null;
  private unit = 'V';
  private bins = 0;
  private binHz = 1;
  private fLow = 1;
  private fHigh = 2;
  channel = 0;
  snapshotsPerRow: number;
  /** Sample time of the newest row (for the axis text). */
  newestT = 0;
  rows = 0;

  constructor(
    private readonly canvas: HTMLCanvasElement,
    private readonly legend: HTMLCanvasElement,
    private readonly axisText: HTMLElement,
    private readonly freqAxis: HTMLCanvasElement | null = null,
    private readonly timeAxis: HTMLCanvasElement | null = null,
    snapshotsPerRow = 5,
  ) {
    this.ctx = canvas.getContext('2d', { willReadFrequently: false })!;
    this.legendCtx = legend.getContext('2d')!;
    this.row = this.ctx.createImageData(canvas.width, 1);
    this.snapshotsPerRow = snapshotsPerRow;
    this.clear();
  }

  /** Maps each pixel column to bins on the spectrum's axis: first bin to Nyquist, the same as the chart. */
  setContext(bins: number, binHz: number, unit: string): void {
    this.unit = unit;
    this.bins = bins;
    this.binHz = binHz;
    this.fLow = binHz;
    this.fHigh = (bins - 1) * binHz;
    this.mapColumns();
    if (this.rangeSource !== 'user' && this.rangeSource !== 'baseline') this.ranged = false;
    this.accCount = 0;
    this.clear();
  }

  /** Places the canvas under the chart's plot area (CSS px from the panel's left edge) and matches its width in
   *  device pixels, so a frequency sits in the same screen column in both. */
  align(leftCss: number, widthCss: number): void {
    const dpr = globalThis.devicePixelRatio || 1;
    const w = Math.max(50, Math.round(widthCss * dpr));
    this.canvas.style.marginLeft = `${leftCss}px`;
    this.canvas.style.width = `${widthCss}px`;
    if (this.freqAxis) {
      this.freqAxis.style.marginLeft = `${leftCss}px`;
      this.freqAxis.style.width = `${widthCss}px`;
    }
    if (this.timeAxis) this.timeAxis.style.width = `${leftCss}px`;
    if (w === this.canvas.width) return;
    this.canvas.width = w;
    this.row = this.ctx.createImageData(w, 1);
    this.mapColumns();
    this.clear();
  }

  private mapColumns(): void {
    const w = this.canvas.width;
    if (this.bins < 2) return;
    const { first, last } = logColumns(w, this.bins, this.binHz, this.fLow, this.fHigh);
    this.colFirst = first;
    this.colLast = last;
    this.acc = new Float64Array(w);
    this.drawAxes();
  }

  /** Column (device px within the canvas) of frequency f, for tests and alignment checks. */
  columnOf(f: number): number {
    return columnOf(f, this.canvas.width, this.fLow, this.fHigh);
  }

  /** Colour range from the baseline: its median density (unit²/Hz) sets the floor. */
  setBaselineFloor(psd: ArrayLike<number> | null): void {
    if (!psd || this.rangeSource === 'user') return;
    const r = rangeAroundFloor(psd, 1); // bin 0 (DC) is no part of the floor
    if (r) this.setRange(r[0], r[1], 'baseline');
  }

  /** Sets the colour range in dB (re 1 unit²/Hz); a user's choice wins over the baseline's until cleared. */
  setRange(lowDb: number, highDb: number, source: 'baseline' | 'user' | 'first row' = 'user'): void {
    if (!(highDb > lowDb)) return;
    this.lowDb = lowDb;
    this.highDb = highDb;
    this.ranged = true;
    this.rangeSource = source;
    this.drawLegend();
    this.onRange?.(lowDb, highDb, source);
  }

  /** Told of every new colour range, so the page's range inputs show it. */
  onRange: ((lowDb: number, highDb: number, source: 'baseline' | 'user' | 'first row') => void) | null = null;

  /** Drops a user's range: the baseline's floor sets it again (or, without one, the next row's). */
  clearUserRange(baselinePsd: ArrayLike<number> | null): void {
    this.rangeSource = null;
    this.ranged = false;
    this.setBaselineFloor(baselinePsd);
  }

  /** Where the colour range came from: the baseline floor, the user, the first row (null: not set yet). */
  get rangeFrom(): 'baseline' | 'user' | 'first row' | null {
    return this.rangeSource;
  }

  clear(): void {
    this.ctx.fillStyle = 'rgb(16, 24, 43)';
    this.ctx.fillRect(0, 0, this.canvas.width, this.canvas.height);
    this.rows = 0;
    this.drawLegend();
    this.drawAxes();
  }

  /** Folds one spectrum (unit²/Hz) into the pending row; draws the row when it is complete. */
  push(psd: Float32Array, t: number): void {
    const w = this.colFirst.length;
    if (w === 0) return;
    const acc = this.acc;
    const first = this.colFirst;
    const last = this.colLast;
    const fresh = this.accCount === 0;
    for (let x = 0; x < w; x++) {
      let m = 0;
      for (let k = first[x], e = last[x]; k <= e; k++) if (psd[k] > m) m = psd[k];
      if (fresh || m > acc[x]) acc[x] = m;
    }
    this.newestT = t;
    if (++this.accCount >= this.snapshotsPerRow) {
      this.drawRow();
      this.accCount = 0;
    }
  }

  /** Sample time one drawn row stands for, seconds (10 spectra a second). */
  get rowSeconds(): number {
    return this.snapshotsPerRow / 10;
  }

  /**
   * Fills the canvas from kept spectra (oldest first, from the store), each drawn as the rows of the time until
   * the next one (`timeOf`, seconds; `now` ends the newest), so the live rows that follow continue one time
   * scale. Rows on another grid (kept under other settings) are skipped. Returns the number of rows drawn.
   */
  prefill(rows: readonly StoredSpectrumJson[], timeOf: (r: StoredSpectrumJson) => number, now: number): number {
    const w = this.colFirst.length;
    if (w === 0) return 0;
    const same = (a: number, b: number): boolean => Math.abs(a - b) <= 1e-9 * Math.max(1, Math.abs(b));
    const h = this.canvas.height;
    const usable = rows
      .filter((r) => same(r.fLow, this.fLow) && same(r.fHigh, this.fHigh) && r.density.length > 1)
      .slice(-h);
    if (usable.length === 0) return 0;
    this.clear();
    let drawn = 0;
    let cols: { first: Int32Array; last: Int32Array; n: number } | null = null;
    for (let i = 0; i < usable.length; i++) {
      const r = usable[i];
      const until = i + 1 < usable.length ? timeOf(usable[i + 1]) : now;
      const k = Math.max(1, Math.min(h, Math.round((until - timeOf(r)) / this.rowSeconds)));
      if (!cols || cols.n !== r.density.length)
        cols = { ...gridColumns(w, this.fLow, this.fHigh, r.density.length, r.fLow, r.fHigh), n: r.density.length };
      for (let x = 0; x < w; x++) {
        let m = 0;
        for (let j = cols.first[x], e = cols.last[x]; j <= e; j++) if (r.density[j] > m) m = r.density[j];
        this.acc[x] = m;
      }
      this.newestT = r.t;
      for (let j = 0; j < k; j++) this.drawRow();
      drawn += k;
    }
    this.accCount = 0;
    this.prefilledRows = drawn;
    return drawn;
  }

  /** Sample time the canvas spans when full, seconds. */
  get spanSeconds(): number {
    return this.canvas.height * this.rowSeconds;
  }

  /** Rows drawn by the last prefill (tests read it). */
  prefilledRows = 0;

  private drawRow(): void {
    const w = this.acc.length;
    const acc = this.acc;
    if (!this.ranged) this.autoRange();
    const lo = this.lowDb;
    const span = this.highDb - this.lowDb;
    const px = this.row.data;
    const lut = this.lut;
    for (let x = 0; x < w; x++) {
      const db = acc[x] > 0 ? powerRatioDb(acc[x]) : lo;
      let i = Math.round(((db - lo) / span) * 255);
      i = i < 0 ? 0 : i > 255 ? 255 : i;
      const o = x * 4;
      const l = i * 4;
      px[o] = lut[l];
      px[o + 1] = lut[l + 1];
      px[o + 2] = lut[l + 2];
      px[o + 3] = 255;
    }
    const h = this.canvas.height;
    this.ctx.drawImage(this.canvas, 0, 0, w, h - 1, 0, 1, w, h - 1);
    this.ctx.putImageData(this.row, 0, 0);
    this.rows++;
    const spanS = Math.min(this.rows, h) * this.rowSeconds;
    this.axisText.textContent =
      `newest row at the top, t = ${this.newestT.toFixed(1)} s (sample time); about ${spanS.toFixed(0)} s shown at 10 spectra/s; ` +
      `${this.snapshotsPerRow} spectra per row (max); colours ${this.lowDb}…${this.highDb} ${densityLabel('dbv', this.unit)}` +
      (this.rangeSource === 'baseline'
        ? ` (baseline floor −${FLOOR_BELOW_DB} to +${FLOOR_ABOVE_DB} dB)`
        : this.rangeSource
          ? ` (${this.rangeSource})`
          : '');
    if (this.rows % 10 === 1) this.drawAxes();
  }

  /** Frequency ticks under the canvas (decades and 2, 5 between) and a time scale beside it. */
  private drawAxes(): void {
    const fa = this.freqAxis;
    if (fa && this.bins >= 2) {
      const dpr = globalThis.devicePixelRatio || 1;
      fa.width = this.canvas.width;
      fa.height = Math.round(18 * dpr);
      const c = fa.getContext('2d');
      if (c) {
        c.clearRect(0, 0, fa.width, fa.height);
        c.fillStyle = '#5b6670';
        c.font = `${Math.round(10 * dpr)}px system-ui, sans-serif`;
        c.textAlign = 'center';
        c.textBaseline = 'bottom';
        for (let d = Math.floor(Math.log10(this.fLow)); d <= Math.ceil(Math.log10(this.fHigh)); d++) {
          for (const m of [1, 2, 5]) {
            const f = m * 10 ** d;
            if (f < this.fLow || f > this.fHigh) continue;
            const x = Math.round(this.columnOf(f)) + 0.5;
            c.fillRect(x, 0, 1, 4 * dpr);
            c.fillText(
              f >= 1000 ? `${f / 1000}k` : `${f}`,
              Math.min(fa.width - 12 * dpr, Math.max(12 * dpr, x)),
              fa.height,
            );
          }
        }
      }
    }
    const ta = this.timeAxis;
    if (ta) {
      const dpr = globalThis.devicePixelRatio || 1;
      ta.height = this.canvas.height;
      ta.width = Math.max(1, Math.round((parseFloat(ta.style.width) || 60) * dpr));
      const c = ta.getContext('2d');
      if (c) {
        c.clearRect(0, 0, ta.width, ta.height);
        c.fillStyle = '#5b6670';
        c.font = `${Math.round(10 * dpr)}px system-ui, sans-serif`;
        c.textAlign = 'right';
        c.textBaseline = 'middle';
        const rowSeconds = this.rowSeconds;
        for (let s = 0; s <= 4; s++) {
          const y = Math.min(ta.height - 6, Math.max(6, (s / 4) * (ta.height - 1)));
          const ago = ((s / 4) * this.canvas.height * rowSeconds).toFixed(0);
          c.fillText(s === 0 ? 'now' : `−${ago} s`, ta.width - 4 * dpr, y);
        }
      }
    }
  }

  /** Without a baseline: the same rule around the first row's median level (its floor, not its lines). */
  private autoRange(): void {
    const r = rangeAroundFloor(this.acc, 0);
    if (r) this.setRange(r[0], r[1], 'first row');
  }

  get range(): [number, number] {
    return [this.lowDb, this.highDb];
  }

  /** A horizontal colour bar under the axis: levels in dB and the unit they are in. */
  private drawLegend(): void {
    const c = this.legendCtx;
    const dpr = globalThis.devicePixelRatio || 1;
    const cssW = 320;
    const cssH = 30;
    this.legend.width = Math.round(cssW * dpr);
    this.legend.height = Math.round(cssH * dpr);
    this.legend.style.width = `${cssW}px`;
    this.legend.style.height = `${cssH}px`;
    const { width } = this.legend;
    c.clearRect(0, 0, width, this.legend.height);
    const barW = Math.round(200 * dpr);
    const barH = Math.round(10 * dpr);
    for (let x = 0; x < barW; x++) {
      const i = Math.round((x / (barW - 1)) * 255) * 4;
      c.fillStyle = `rgb(${this.lut[i]}, ${this.lut[i + 1]}, ${this.lut[i + 2]})`;
      c.fillRect(x, 0, 1, barH);
    }
    c.fillStyle = '#1c2630';
    c.font = `${Math.round(10 * dpr)}px system-ui, sans-serif`;
    c.textBaseline = 'top';
    const steps = 5;
    for (let s = 0; s <= steps; s++) {
      const db = this.lowDb + ((this.highDb - this.lowDb) * s) / steps;
      c.textAlign = s === 0 ? 'left' : s === steps ? 'right' : 'center';
      c.fillText(db.toFixed(0), (s / steps) * (barW - 1), barH + 2 * dpr);
    }
    c.textAlign = 'left';
    c.fillText(densityLabel('dbv', this.unit), barW + 8 * dpr, 0);
  }
}
