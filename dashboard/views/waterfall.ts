// Waterfall of recent spectra on its own canvas: newest row at the bottom, log-frequency columns, colour by
// density level in dB, with a colour-scale legend. One row per `snapshotsPerRow` updates (max over them), so the
// canvas spans minutes; per update the work is one pass over the bins and, per row, one scroll and one line.
import { densityLabel } from '../units.ts';

/** Our own colour ramp: deep ink → blue → teal → sand → paper. */
const STOPS: [number, number, number][] = [
  [16, 24, 43], [29, 78, 137], [42, 157, 143], [233, 196, 106], [253, 246, 227],
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
  private unit = 'V';
  channel = 0;
  snapshotsPerRow: number;
  /** Sample time of the newest row (for the axis text). */
  newestT = 0;
  rows = 0;

  constructor(
    private readonly canvas: HTMLCanvasElement,
    private readonly legend: HTMLCanvasElement,
    private readonly axisText: HTMLElement,
    snapshotsPerRow = 5,
  ) {
    this.ctx = canvas.getContext('2d', { willReadFrequently: false })!;
    this.legendCtx = legend.getContext('2d')!;
    this.row = this.ctx.createImageData(canvas.width, 1);
    this.snapshotsPerRow = snapshotsPerRow;
    this.clear();
  }

  /** Maps each pixel column to a run of bins on a log-frequency scale from binHz to Nyquist. */
  setContext(bins: number, binHz: number, unit: string): void {
    const w = this.canvas.width;
    this.unit = unit;
    this.colFirst = new Int32Array(w);
    this.colLast = new Int32Array(w);
    this.acc = new Float64Array(w);
    const lo = Math.log10(binHz);
    const hi = Math.log10((bins - 1) * binHz);
    for (let x = 0; x < w; x++) {
      const f0 = 10 ** (lo + ((hi - lo) * x) / w);
      const f1 = 10 ** (lo + ((hi - lo) * (x + 1)) / w);
      const a = Math.max(1, Math.min(bins - 1, Math.round(f0 / binHz)));
      const b = Math.max(a, Math.min(bins - 1, Math.round(f1 / binHz) - 1));
      this.colFirst[x] = a;
      this.colLast[x] = b;
    }
    this.ranged = false;
    this.accCount = 0;
    this.clear();
  }

  clear(): void {
    this.ctx.fillStyle = 'rgb(16, 24, 43)';
    this.ctx.fillRect(0, 0, this.canvas.width, this.canvas.height);
    this.rows = 0;
    this.drawLegend();
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

  private drawRow(): void {
    const w = this.acc.length;
    const acc = this.acc;
    if (!this.ranged) this.autoRange();
    const lo = this.lowDb;
    const span = this.highDb - this.lowDb;
    const px = this.row.data;
    const lut = this.lut;
    for (let x = 0; x < w; x++) {
      const db = acc[x] > 0 ? 10 * Math.log10(acc[x]) : lo;
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
    this.ctx.drawImage(this.canvas, 0, 1, w, h - 1, 0, 0, w, h - 1);
    this.ctx.putImageData(this.row, 0, h - 1);
    this.rows++;
    const spanS = (Math.min(this.rows, h) * this.snapshotsPerRow) / 10;
    this.axisText.textContent = `newest row t = ${this.newestT.toFixed(1)} s (sample time), bottom; about ${spanS.toFixed(0)} s shown at 10 spectra/s; ${this.snapshotsPerRow} spectra per row (max)`;
  }

  /** Fixes the colour range from the first row: 10 dB steps around its levels (kept afterwards so colours stay comparable). */
  private autoRange(): void {
    let min = Infinity;
    let max = -Infinity;
    for (let x = 0; x < this.acc.length; x++) {
      if (!(this.acc[x] > 0)) continue;
      const db = 10 * Math.log10(this.acc[x]);
      if (db < min) min = db;
      if (db > max) max = db;
    }
    if (!Number.isFinite(min)) return;
    this.lowDb = Math.floor(min / 10) * 10 - 10;
    this.highDb = Math.max(this.lowDb + 20, Math.ceil(max / 10) * 10 + 10);
    this.ranged = true;
    this.drawLegend();
  }

  get range(): [number, number] {
    return [this.lowDb, this.highDb];
  }

  private drawLegend(): void {
    const c = this.legendCtx;
    const { width, height } = this.legend;
    c.clearRect(0, 0, width, height);
    const barW = 16;
    for (let y = 0; y < height; y++) {
      const i = Math.round((1 - y / (height - 1)) * 255) * 4;
      c.fillStyle = `rgb(${this.lut[i]}, ${this.lut[i + 1]}, ${this.lut[i + 2]})`;
      c.fillRect(0, y, barW, 1);
    }
    c.fillStyle = '#1c2630';
    c.font = '11px system-ui, sans-serif';
    c.textBaseline = 'middle';
    const steps = 4;
    for (let s = 0; s <= steps; s++) {
      const db = this.highDb - ((this.highDb - this.lowDb) * s) / steps;
      const y = Math.min(height - 6, Math.max(6, (s / steps) * (height - 1)));
      c.fillText(db.toFixed(0), barW + 4, y);
    }
    c.save();
    c.translate(width - 4, height / 2);
    c.rotate(-Math.PI / 2);
    c.textAlign = 'center';
    c.fillText(densityLabel('dbv', this.unit), 0, 0);
    c.restore();
  }
}
