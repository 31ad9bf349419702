// The spectrum chart: one trace per channel on a log-frequency axis, with max-hold, baseline, threshold and
// expected-floor overlays, band shading, mains-harmonic markers and a cursor readout (density and tone RMS).
import uPlot from 'uplot';
import type { SpectrumContext, BandRow } from '../../protocol/messages.ts';
import type { DecodedFrame } from '../../protocol/frame.ts';
import { windowMainLobeHalfWidth } from '../../dsp/windows.ts';
import { lineAboveFloor, peakBin } from '../../dsp/tone.ts';
import { RunningMedian } from '../../dsp/detection/running-median.ts';
import { convertInto, densityLabel, fromPsd, isLogAxis, type DensityUnit } from '../units.ts';
import { channelColour, channelDash, withAlpha } from '../colours.ts';
import { fixedDensityRange, paddedRange } from './y-range.ts';
import { si, hz, short } from '../format.ts';
import { powerRatioDb } from '../../dsp/units.ts';
import { cumulativeRms } from '../../dsp/measure/cumulative-rms.ts';
import { noiseFigureFromTotal } from '../../dsp/measure/noise-figure.ts';
import { psdFactor, referralSuffix, receivedAt, type ReferredTo } from '../referral.ts';

export interface SpectrumOverlays {
  maxHold: boolean;
  baseline: boolean;
  mains: boolean;
  /** Expected floor from the noise budget, unit/√Hz, or null. */
  expectedFloor: number | null;
}

const MAX_HARMONICS = 40;
/** Harmonic markers closer than this on screen are skipped, so high orders never merge into a hatch. */
const MIN_MARKER_SPACING_PX = 14;

/** Ticks at 1, 2 and 5 × each decade inside [min, max]: the range ends at Nyquist, not on a decade. */
function logTicks(min: number, max: number): number[] {
  const out: number[] = [];
  for (let d = Math.floor(Math.log10(min)); d <= Math.ceil(Math.log10(max)); d++) {
    for (const m of [1, 2, 5]) {
      const f = m * 10 ** d;
      if (f >= min * 0.999 && f <= max * 1.001) out.push(f);
    }
  }
  return out;
}

/** From the window, not the element: sizing from the element's own height would feed back through the chart. */
function chartHeight(): number {
  return Math.round(Math.min(480, Math.max(280, window.innerHeight * 0.42)));
}

export class SpectrumView {
  private plot: uPlot | null = null;
  private ctx: SpectrumContext | null = null;
  private units: DensityUnit = 'asd';
  private x = new Float64Array(0);
  private live: Float64Array[] = [];
  private held: Float64Array[] = [];
  private heldPsd: Float64Array[] = [];
  private base: Float64Array[] = [];
  private thr: (number | null)[][] = [];
  private floor = new Float64Array(0);
  private data: uPlot.AlignedData = [[]];
  private latest: DecodedFrame | null = null;
  private baselineFrame: DecodedFrame | null = null;
  private bands: BandRow[] = [];
  private lobeHalfWidth = 2;
  private cursorIdx: number | null = null;
  /** Follow the data on the y axis instead of the fixed range from baseline and thresholds. */
  private followY = false;
  private drawPending = false;
  /** The point densities are shown at, and per channel the factor on a received PSD that takes them there. */
  private view: ReferredTo = 'adc';
  private factor: number[] = [];
  /** Cumulative RMS per channel (√Σ psd·Δf from the lowest shown bin up, as analyze --cumulative), when shown. */
  private cumOn = false;
  private cum: Float64Array[] = [];
  private scratch = new Float64Array(0);
  private scratchOut = new Float64Array(0);
  overlays: SpectrumOverlays = { maxHold: false, baseline: true, mains: true, expectedFloor: null };

  constructor(
    private readonly el: HTMLElement,
    private readonly readout: HTMLElement,
  ) {
    el.addEventListener('keydown', (e) => this.onKey(e));
    new ResizeObserver(() => this.resize()).observe(el);
  }

  get context(): SpectrumContext | null {
    return this.ctx;
  }

  /** The newest frame (for exports). */
  get frame(): DecodedFrame | null {
    return this.latest;
  }

  get unitChoice(): DensityUnit {
    return this.units;
  }

  /** The plot area in CSS px relative to the chart element (the waterfall lines up under it). */
  plotBox(): { left: number; width: number } | null {
    if (!this.plot) return null;
    const dpr = devicePixelRatio || 1;
    const over = this.plot.over.getBoundingClientRect();
    const root = this.el.getBoundingClientRect();
    return { left: over.left - root.left, width: this.plot.bbox.width / dpr };
  }

  get canvas(): HTMLCanvasElement | null {
    return this.plot ? (this.plot.ctx.canvas as HTMLCanvasElement) : null;
  }

  setContext(ctx: SpectrumContext): void {
    this.ctx = ctx;
    const n = ctx.bins - 1; // bin 0 (DC) has no place on a log-frequency axis
    this.x = new Float64Array(n);
    for (let i = 0; i < n; i++) this.x[i] = (i + 1) * ctx.binHz;
    const C = ctx.channels.length;
    const mk = () => Array.from({ length: C }, () => new Float64Array(n).fill(NaN));
    this.live = mk();
    this.held = mk();
    this.base = mk();
    this.heldPsd = Array.from({ length: C }, () => new Float64Array(n));
    this.thr = Array.from({ length: C }, () => new Array<number | null>(n).fill(null));
    this.floor = new Float64Array(n).fill(NaN);
    this.cum = mk();
    this.scratch = new Float64Array(ctx.bins);
    this.scratchOut = new Float64Array(ctx.bins);
    try {
      this.lobeHalfWidth = windowMainLobeHalfWidth(ctx.settings.window);
    } catch {
      this.lobeHalfWidth = 2;
    }
    this.view = receivedAt(ctx.channels[0]?.front);
    this.factor = ctx.channels.map((c) => psdFactor(c.front, this.view));
    this.latest = null;
    this.rebuild();
  }

  get referredTo(): ReferredTo {
    return this.view;
  }

  /** Per channel, the factor on a received PSD for the point shown (exports and the band table use it). */
  psdFactors(): readonly number[] {
    return this.factor;
  }

  /** The density label of the first channel at the point shown, e.g. "V/√Hz (input)". */
  densityLabel(): string {
    const ch = this.ctx?.channels[0];
    return densityLabel(this.units, ch?.unit ?? 'V') + referralSuffix(ch?.front, this.view);
  }

  /** Refers every trace to the amplifier input or to the ADC. */
  setReferral(view: ReferredTo): void {
    if (!this.ctx || view === this.view) return;
    this.view = view;
    this.factor = this.ctx.channels.map((c) => psdFactor(c.front, view));
    this.recomputeOverlays();
    if (this.latest) this.convertLive(this.latest);
    for (let c = 0; c < this.held.length; c++)
      convertInto(this.units, this.heldPsd[c], 0, this.held[c], this.factor[c]);
    this.rebuild();
    if (this.cursorIdx !== null) this.showReadout(this.cursorIdx);
  }

  setUnits(u: DensityUnit): void {
    if (u === this.units) return;
    this.units = u;
    this.recomputeOverlays();
    if (this.latest) this.convertLive(this.latest);
    for (let c = 0; c < this.held.length; c++) convertInto(u, this.heldPsd[c], 0, this.held[c], this.factor[c]);
    this.rebuild();
  }

  setOverlays(o: Partial<SpectrumOverlays>): void {
    this.overlays = { ...this.overlays, ...o };
    this.recomputeOverlays();
    if (!this.plot || !this.ctx) return;
    const C = this.ctx.channels.length;
    for (let c = 0; c < C; c++) {
      this.plot.setSeries(1 + C + c, { show: this.overlays.maxHold });
      this.plot.setSeries(1 + 2 * C + c, { show: this.overlays.baseline && this.baselineFrame !== null });
      this.plot.setSeries(1 + 3 * C + c, { show: this.overlays.baseline && this.baselineFrame !== null });
    }
    this.plot.setSeries(1 + 4 * C, { show: this.overlays.expectedFloor !== null });
    this.redraw();
  }

  /** y follows the data (on request) or stays on the fixed range from the baseline and thresholds. */
  setFollowY(on: boolean): void {
    this.followY = on;
    this.resetZoom();
  }

  /** Back to the whole spectrum: first bin to Nyquist, and the fixed (or data) y range. */
  resetZoom(): void {
    if (!this.plot || this.x.length === 0) return;
    this.plot.batch(() => {
      this.plot!.setScale('x', { min: this.x[0], max: this.x[this.x.length - 1] });
      const [min, max] = this.yRange();
      this.plot!.setScale('y', { min, max });
    });
  }

  /** The y range shown: fixed from the baseline and thresholds with a margin, or from the data on request. */
  private yRange(): [number, number] {
    const log = isLogAxis(this.units);
    const fixedRange = this.followY ? null : fixedDensityRange([...this.base, ...this.thr], this.floor, log);
    return fixedRange ?? paddedRange([...this.live, ...this.held], log);
  }

  resetMaxHold(): void {
    for (let c = 0; c < this.held.length; c++) {
      this.heldPsd[c].fill(0);
      this.held[c].fill(NaN);
    }
    this.redraw();
  }

  setBaseline(f: DecodedFrame | null): void {
    this.baselineFrame = f && this.ctx && f.length === this.ctx.bins ? f : null;
    this.recomputeOverlays();
    this.setOverlays({});
    this.resetZoom();
  }

  /** Moves the harmonic markers when the measured fundamental moves by more than 0.01 Hz. */
  setMains(hz: number | null): void {
    if (!this.ctx) return;
    const old = this.ctx.mainsHz;
    if (hz === old || (hz !== null && old !== null && Math.abs(hz - old) < 0.01)) return;
    this.ctx = { ...this.ctx, mainsHz: hz };
    this.redraw();
  }

  setBands(rows: BandRow[]): void {
    const changed =
      rows.length !== this.bands.length ||
      rows.some((r, i) => r.thresholdDb !== this.bands[i]?.thresholdDb || r.low !== this.bands[i]?.low);
    this.bands = rows;
    if (changed) {
      this.recomputeOverlays();
      this.redraw();
    }
  }

  /** One spectrum update: convert into the fixed arrays, fold into max-hold, redraw. Allocates nothing. */
  update(f: DecodedFrame): void {
    if (!this.ctx || f.length !== this.ctx.bins || f.channels !== this.live.length) return;
    this.latest = f;
    this.convertLive(f);
    const n = this.x.length;
    const u = this.units;
    for (let c = 0; c < f.channels; c++) {
      const src = f.values[c];
      const hp = this.heldPsd[c];
      const hd = this.held[c];
      const k = this.factor[c];
      for (let i = 0; i < n; i++) {
        const raw = src[i + 1];
        if (raw > hp[i]) {
          hp[i] = raw;
          const p = raw * k;
          hd[i] = u === 'asd' ? Math.sqrt(p) : u === 'psd' ? p : powerRatioDb(p);
        }
      }
    }
    this.redraw();
    if (this.cursorIdx !== null) this.showReadout(this.cursorIdx);
  }

  private convertLive(f: DecodedFrame): void {
    for (let c = 0; c < f.channels; c++) convertInto(this.units, f.values[c], 1, this.live[c], this.factor[c]);
    if (this.cumOn) this.computeCumulative(f);
  }

  /** The cumulative RMS of the frame at the point shown, in unit rms; its last value is the total RMS. */
  private computeCumulative(f: DecodedFrame): void {
    for (let c = 0; c < f.channels; c++) {
      const k = this.factor[c];
      const src = f.values[c];
      for (let i = 0; i < this.scratch.length; i++) this.scratch[i] = src[i] * k;
      cumulativeRms(this.scratch, f.binHz, 1, this.scratchOut);
      this.cum[c].set(this.scratchOut.subarray(1, 1 + this.cum[c].length));
    }
  }

  /** Shows or hides the cumulative RMS traces (on their own y axis). */
  setCumulative(on: boolean): void {
    if (on === this.cumOn) return;
    this.cumOn = on;
    if (on && this.latest) this.computeCumulative(this.latest);
    this.rebuild();
  }

  /** The cumulative RMS shown for a channel (tests and exports read it), or null when hidden. */
  cumulative(c: number): Float64Array | null {
    return this.cumOn ? (this.cum[c] ?? null) : null;
  }

  private recomputeOverlays(): void {
    const n = this.x.length;
    const u = this.units;
    const b = this.baselineFrame;
    for (let c = 0; c < this.base.length; c++) {
      const out = this.base[c];
      const t = this.thr[c];
      t.fill(null);
      if (!b || c >= b.channels) {
        out.fill(NaN);
        continue;
      }
      convertInto(u, b.values[c], 1, out, this.factor[c]);
      const name = this.ctx!.channels[c].name;
      for (const row of this.bands) {
        if (row.channel !== name || row.thresholdDb === null) continue;
        const gain = 10 ** (row.thresholdDb / 10);
        for (let i = 0; i < n; i++) {
          const fq = this.x[i];
          if (fq >= row.low && fq <= row.high) t[i] = fromPsd(u, b.values[c][i + 1] * gain * this.factor[c]);
        }
      }
    }
    const e = this.overlays.expectedFloor;
    this.floor.fill(e === null ? NaN : (fromPsd(u, e * e) ?? NaN));
  }

  /** Coalesces updates to one draw per animation frame. setData without resetting scales keeps a zoom. */
  private redraw(): void {
    if (!this.plot || this.drawPending) return;
    this.drawPending = true;
    requestAnimationFrame(() => this.flushDraw());
  }

  /** Draws a pending update now (the animation frame does this; the benchmark calls it to time the work). */
  flushDraw(): void {
    if (!this.drawPending || !this.plot) return;
    this.drawPending = false;
    this.plot.setData(this.data, false); // uPlot's own way to keep scales: new data, then an explicit redraw
    this.plot.redraw();
    if (this.followY && this.plot.scales.x.min === this.x[0] && this.plot.scales.x.max === this.x[this.x.length - 1]) {
      const [min, max] = this.yRange();
      this.plot.setScale('y', { min, max });
    }
  }

  private resize(): void {
    if (this.plot) this.plot.setSize({ width: this.el.clientWidth, height: chartHeight() });
  }

  private rebuild(): void {
    this.plot?.destroy();
    this.plot = null;
    const ctx = this.ctx;
    if (!ctx) return;
    const C = ctx.channels.length;
    const unit = ctx.channels[0]?.unit ?? 'V';
    const label = this.densityLabel();
    const series: uPlot.Series[] = [{ label: 'f', value: (_u, v) => (v == null ? '—' : hz(v)) }];
    const fmt = (_u: uPlot, v: number | null) =>
      v == null || !Number.isFinite(v) ? '—' : this.units === 'dbv' ? `${v.toFixed(1)}` : si(v, '');
    // A channel's own colour and line style on every trace of it: live solid or its dash, max-hold faint, the
    // baseline long-dashed and the threshold dotted, in the same hue.
    for (let c = 0; c < C; c++)
      series.push({
        label: ctx.channels[c].name,
        stroke: channelColour(c),
        dash: channelDash(c),
        width: 1.25,
        value: fmt,
        spanGaps: false,
      });
    for (let c = 0; c < C; c++)
      series.push({
        label: `${ctx.channels[c].name} max`,
        stroke: withAlpha(channelColour(c), 0.45),
        dash: channelDash(c),
        width: 1,
        show: this.overlays.maxHold,
        value: fmt,
      });
    for (let c = 0; c < C; c++)
      series.push({
        label: `${ctx.channels[c].name} baseline`,
        stroke: withAlpha(channelColour(c), 0.8),
        dash: [8, 4],
        width: 1,
        show: this.overlays.baseline && this.baselineFrame !== null,
        value: fmt,
      });
    for (let c = 0; c < C; c++)
      series.push({
        label: `${ctx.channels[c].name} threshold`,
        stroke: withAlpha(channelColour(c), 0.65),
        dash: [1.5, 3],
        width: 1.5,
        show: this.overlays.baseline && this.baselineFrame !== null,
        value: fmt,
      });
    series.push({
      label: 'expected floor',
      stroke: '#2f7d32',
      dash: [10, 4],
      width: 1.5,
      show: this.overlays.expectedFloor !== null,
      value: fmt,
    });
    for (let c = 0; c < C; c++)
      series.push({
        label: `${ctx.channels[c].name} cumulative RMS`,
        scale: 'rms',
        stroke: channelColour(c),
        dash: [2, 3],
        width: 1.5,
        show: this.cumOn,
        value: (_u, v) => (v == null || !Number.isFinite(v) ? '—' : si(v, '')),
      });
    this.data = [
      this.x,
      ...this.live,
      ...this.held,
      ...this.base,
      ...this.thr,
      this.floor,
      ...this.cum,
    ] as unknown as uPlot.AlignedData;
    const log = isLogAxis(this.units);
    const opts: uPlot.Options = {
      width: Math.max(300, this.el.clientWidth),
      height: chartHeight(),
      pxAlign: 0,
      legend: { show: true, live: false },
      cursor: { drag: { x: true, y: false }, focus: { prox: 16 } },
      scales: {
        // x runs from the first bin to Nyquist exactly (a log scale would otherwise snap out to the next decade).
        x: {
          time: false,
          distr: 3,
          log: 10,
          range: (_u, min, max) => (this.x.length ? [this.x[0], this.x[this.x.length - 1]] : [min, max]),
        },
        // y is never auto-ranged per frame: it holds the range set by resetZoom (fixed, or the data on request).
        y: { ...(log ? { distr: 3, log: 10 } : { distr: 1 }), auto: false, range: () => this.yRange() },
        // Its own range, always positive and finite: with the trace hidden its data are all NaN, and a log scale
        // auto-ranged on no data makes uPlot's log splits run away ("Invalid array length").
        rms: {
          distr: 3,
          log: 10,
          range: (_u, min, max) =>
            Number.isFinite(min) && Number.isFinite(max) && min > 0 && max >= min ? [min / 2, max * 2] : [1e-9, 1e-3],
        },
      },
      axes: [
        {
          label: 'Frequency, Hz',
          splits: (_u, _i, min, max) => logTicks(min, max),
          values: (_u, vals) => vals.map((v) => (v == null ? '' : v >= 1000 ? `${short(v / 1000)}k` : short(v))),
          stroke: '#5b6670',
          grid: { stroke: '#e6e1d6' },
        },
        {
          label,
          size: 70,
          values: (_u, vals) => vals.map((v) => (v == null ? '' : log ? si(v, '', 2) : v.toFixed(0))),
          stroke: '#5b6670',
          grid: { stroke: '#e6e1d6' },
        },
        {
          scale: 'rms',
          side: 1,
          show: this.cumOn,
          label: `${ctx.channels[0]?.unit ?? 'V'} rms${referralSuffix(ctx.channels[0]?.front, this.view)}, cumulative`,
          size: 70,
          values: (_u, vals) => vals.map((v) => (v == null ? '' : si(v, '', 2))),
          stroke: '#5b6670',
          grid: { show: false },
        },
      ],
      series,
      hooks: {
        drawClear: [(u) => this.drawBackdrop(u)],
        setCursor: [
          (u) => {
            this.cursorIdx = u.cursor.idx ?? null;
            if (this.cursorIdx !== null) this.showReadout(this.cursorIdx);
          },
        ],
      },
    };
    this.plot = new uPlot(opts, this.data, this.el);
    // A double-click resets the zoom (uPlot's own x reset, plus our y range).
    this.plot.over.addEventListener('dblclick', () => this.resetZoom());
    this.resetZoom();
  }

  /** Band shading and mains-harmonic markers, drawn under the traces. */
  private drawBackdrop(u: uPlot): void {
    const c = u.ctx;
    const { top, height, left, width } = u.bbox;
    c.save();
    const seen = new Set<string>();
    let shade = 0;
    for (const b of this.bands) {
      const key = `${b.low}-${b.high}`;
      if (seen.has(key)) continue;
      seen.add(key);
      const x0 = Math.max(left, u.valToPos(Math.max(b.low, this.x[0] ?? 1), 'x', true));
      const x1 = Math.min(left + width, u.valToPos(b.high, 'x', true));
      if (!(x1 > x0)) continue;
      c.fillStyle = shade++ % 2 ? 'rgba(13, 107, 99, 0.05)' : 'rgba(161, 92, 7, 0.06)';
      c.fillRect(x0, top, x1 - x0, height);
      const label = `${short(b.low)}–${short(b.high)} Hz`;
      c.font = `${Math.round(10 * devicePixelRatio)}px system-ui, sans-serif`;
      // One label row per band, so bands that start together (a wide band over narrow ones) stay readable.
      if (c.measureText(label).width + 6 * devicePixelRatio < x1 - x0) {
        c.fillStyle = '#5b6670';
        c.fillText(label, x0 + 3 * devicePixelRatio, top + (12 + 12 * (shade - 1)) * devicePixelRatio);
      }
    }
    const mains = this.ctx?.mainsHz;
    if (this.overlays.mains && mains) {
      c.strokeStyle = 'rgba(180, 35, 44, 0.35)';
      c.setLineDash([3, 5]);
      c.lineWidth = 1;
      const fMax = Math.min(this.x[this.x.length - 1] ?? 0, u.scales.x.max ?? Infinity);
      let last = -Infinity;
      for (let k = 1; k <= MAX_HARMONICS && k * mains <= fMax; k++) {
        const px = Math.round(u.valToPos(k * mains, 'x', true)) + 0.5;
        if (px - last < MIN_MARKER_SPACING_PX * devicePixelRatio) continue;
        last = px;
        c.beginPath();
        c.moveTo(px, top);
        c.lineTo(px, top + height);
        c.stroke();
      }
    }
    c.restore();
  }

  private showReadout(idx: number): void {
    const ctx = this.ctx;
    const f = this.latest;
    if (!ctx || !f || idx < 0 || idx >= this.x.length) return;
    const unit = ctx.channels[0]?.unit ?? 'V';
    const where = referralSuffix(ctx.channels[0]?.front, this.view);
    const parts = [`f = ${hz(this.x[idx])}`];
    const h = Math.ceil(this.lobeHalfWidth);
    for (let c = 0; c < f.channels; c++) {
      // dsp/tone.ts reads float64; a copy only when the cursor moves, referred to the point shown
      const k = this.factor[c];
      const psd = Float64Array.from(f.values[c], (v) => v * k);
      const bin = idx + 1;
      const d = fromPsd(this.units, psd[bin]);
      const dens =
        d === null
          ? '—'
          : this.units === 'dbv'
            ? `${d.toFixed(1)} ${densityLabel('dbv', unit)}${where}`
            : si(d, densityLabel(this.units, unit)) + where;
      // Line level: the largest bin within one main lobe of the cursor, its lobe's power less the local floor's
      // share (dsp/tone.ts lineAboveFloor, the rule the spur and mains events use; floor = local median as there).
      const peak = peakBin(psd, Math.max(1, bin - h), Math.min(psd.length - 1, bin + h));
      const floor = new RunningMedian(psd.length, Math.max(8, 4 * h)).at(psd, peak);
      const tone = lineAboveFloor(psd, ctx.binHz, this.lobeHalfWidth, peak, floor);
      parts.push(
        `${ctx.channels[c].name}: ${dens}, line ${si(tone.rms, `${unit} rms`)}${where} at ${hz(tone.frequency)}${this.noiseFigureText(c, floor)}`,
      );
    }
    this.readout.textContent = parts.join(' · ');
  }

  /**
   * NF and T_e against the budget's source resistance and temperature, from the local floor at the cursor referred
   * to the amplifier input (dsp/measure/noise-figure.ts, as analyze): empty without a budget and a gain.
   */
  private noiseFigureText(c: number, floorAtView: number): string {
    const front = this.ctx?.channels[c]?.front;
    const b = front?.budget;
    if (!b || front.gain === undefined || !(b.sourceOhms > 0) || !(floorAtView > 0)) return '';
    const inputPsd = (floorAtView * psdFactor(front, 'input')) / this.factor[c];
    const nf = noiseFigureFromTotal(Math.sqrt(inputPsd), b.sourceOhms, b.kelvin);
    return `, NF ${nf.figureDb.toFixed(2)} dB, Tₑ ${si(nf.kelvin, 'K')} (floor re ${si(b.sourceOhms, 'Ω')} at ${b.kelvin} K)`;
  }

  private onKey(e: KeyboardEvent): void {
    if (this.plot && (e.key === 'Home' || e.key === 'Escape' || e.key === '0')) {
      e.preventDefault();
      this.resetZoom();
      return;
    }
    if (!this.plot || (e.key !== 'ArrowLeft' && e.key !== 'ArrowRight')) return;
    e.preventDefault();
    const step = (e.shiftKey ? 10 : 1) * (e.key === 'ArrowLeft' ? -1 : 1);
    const n = this.x.length;
    const idx = Math.min(n - 1, Math.max(0, (this.cursorIdx ?? Math.floor(n / 2)) + step));
    const left = this.plot.valToPos(this.x[idx], 'x');
    this.plot.setCursor({ left, top: this.plot.bbox.height / (2 * devicePixelRatio) });
    this.cursorIdx = idx;
    this.showReadout(idx);
  }
}
