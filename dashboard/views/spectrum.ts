// The spectrum chart: one trace per channel on a log-frequency axis, with max-hold, baseline, threshold,
// expected-floor and limit-mask overlays, band shading, mains-harmonic markers and a cursor readout (density and
// tone RMS).
import uPlot from 'uplot';
import type { SpectrumContext, BandRow } from '../../protocol/messages.ts';
import type { DecodedFrame } from '../../protocol/frame.ts';
import { windowMainLobeHalfWidth } from '../../dsp/windows.ts';
import { lineAboveFloor, peakBin } from '../../dsp/tone.ts';
import { RunningMedian } from '../../dsp/detection/running-median.ts';
import {
  convertInto,
  converterScale,
  densityLabel,
  formatAmplitude,
  formatDensity,
  fromPsd,
  isConverterUnit,
  isLogAxis,
  unitsAvailable,
  type DensityUnit,
} from '../units.ts';
import { maskOnBins } from '../../dsp/measure/limit-mask.ts';
import type { ChannelLimitMask } from '../../protocol/limit-masks.ts';
import { channelColour, channelDash, withAlpha } from '../colours.ts';
import { decadeRange, fixedDensityRange, paddedRange } from './y-range.ts';
import { si, hz, short } from '../format.ts';
import { cumulativeRms } from '../../dsp/measure/cumulative-rms.ts';
import { noiseFigureFromTotal } from '../../dsp/measure/noise-figure.ts';
import { psdFactor, psdFactorBetween, referralSuffix, receivedAt, type ReferredTo } from '../referral.ts';

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
  /** Per channel, the factor on a received PSD for what is drawn: the referral times the converter unit's scale. */
  private display: number[] = [];
  /** The limit masks from the agent, per channel the limit at each bin (ASD at the mask's point) and as drawn. */
  private masks: ChannelLimitMask[] = [];
  private maskAsd: (Float64Array | null)[] = [];
  /** null where the mask does not reach: uPlot breaks a line only at null (a NaN would be drawn to the axis). */
  private maskShown: (number | null)[][] = [];
  /** Masks that cannot be drawn on their channel (another unit), in words. */
  private maskNotes: string[] = [];
  /** Band labels of the last backdrop: placed under the traces, drawn over them (drawBandLabels). */
  private bandLabels: { label: string; x: number; y: number }[] = [];
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
    this.maskShown = Array.from({ length: C }, () => new Array<number | null>(n).fill(null));
    this.scratch = new Float64Array(ctx.bins);
    this.scratchOut = new Float64Array(ctx.bins);
    try {
      this.lobeHalfWidth = windowMainLobeHalfWidth(ctx.settings.window);
    } catch {
      this.lobeHalfWidth = 2;
    }
    this.view = receivedAt(ctx.channels[0]?.front);
    if (!this.unitChoices().includes(this.units)) this.units = 'asd';
    this.setFactors();
    this.placeMasks();
    this.latest = null;
    this.rebuild();
  }

  /** The units this stream can be shown in (dBFS and LSB only where every channel's converter is known). */
  unitChoices(): DensityUnit[] {
    return unitsAvailable(this.ctx?.channels.map((c) => c.front) ?? []);
  }

  /** Referral factors for the point shown, and the drawn factors (converter units are at the ADC). */
  private setFactors(): void {
    const chans = this.ctx?.channels ?? [];
    if (isConverterUnit(this.units)) this.view = 'adc';
    this.factor = chans.map((c) => psdFactor(c.front, this.view));
    this.display = chans.map((c, i) => this.factor[i] * (converterScale(this.units, c.front) ?? NaN));
  }

  /** The agent's limit masks (replacing any before); drawn on the channels they name. */
  setMasks(masks: ChannelLimitMask[]): void {
    this.masks = masks;
    if (!this.ctx) return;
    this.placeMasks();
    this.rebuild();
  }

  /** Each channel's mask at every bin by the limit rule's log-log interpolation (dsp/measure/limit-mask.ts). */
  private placeMasks(): void {
    const chans = this.ctx?.channels ?? [];
    this.maskNotes = [];
    this.maskAsd = chans.map((c) => {
      const m = this.masks.find((k) => k.channel === c.name);
      if (!m) return null;
      if (m.unit !== c.unit) {
        this.maskNotes.push(`${c.name}: limit mask in ${m.unit}/√Hz not drawn (the channel is in ${c.unit})`);
        return null;
      }
      return maskOnBins({ frequency: Float64Array.from(m.frequency), limit: Float64Array.from(m.limit) }, this.x);
    });
    this.convertMasks();
  }

  /** The masks in the unit and at the point shown: L² referred from the mask's point, then scaled like the traces. */
  private convertMasks(): void {
    const chans = this.ctx?.channels ?? [];
    for (let c = 0; c < this.maskShown.length; c++) {
      const out = this.maskShown[c];
      const asd = this.maskAsd[c];
      const m = this.masks.find((k) => k.channel === chans[c]?.name);
      if (!asd || !m) {
        out.fill(null);
        continue;
      }
      const front = chans[c].front;
      const k = psdFactorBetween(front, m.referredTo, this.view) * (converterScale(this.units, front) ?? NaN);
      for (let i = 0; i < out.length; i++) out[i] = fromPsd(this.units, asd[i] * asd[i] * k);
    }
  }

  /** The limit mask drawn for a channel (tests read it), or null when it has none. */
  maskLine(c: number): readonly (number | null)[] | null {
    return this.maskAsd[c] ? this.maskShown[c] : null;
  }

  get referredTo(): ReferredTo {
    return this.view;
  }

  /** Per channel, the factor on a received PSD for the point shown (exports and the band table use it). */
  psdFactors(): readonly number[] {
    return this.factor;
  }

  /** Per channel, the factor on a received PSD before fromPsd for the unit shown (referral × converter scale). */
  displayFactors(): readonly number[] {
    return this.display;
  }

  /** The density label of the first channel at the point shown, e.g. "V/√Hz (input)". */
  densityLabel(): string {
    const ch = this.ctx?.channels[0];
    return densityLabel(this.units, ch?.unit ?? 'V') + this.where(ch?.front);
  }

  /** The point named after a unit: none for the converter units (they are re the ADC by definition). */
  where(front: SpectrumContext['channels'][number]['front']): string {
    return isConverterUnit(this.units) ? '' : referralSuffix(front, this.view);
  }

  /** Refers every trace to the amplifier input or to the ADC. */
  setReferral(view: ReferredTo): void {
    if (!this.ctx || view === this.view || isConverterUnit(this.units)) return;
    this.view = view;
    this.reconvert();
  }

  /** The unit shown; dBFS and LSB (at the ADC) only where the stream offers them. */
  setUnits(u: DensityUnit): void {
    if (u === this.units || (this.ctx && !this.unitChoices().includes(u))) return;
    this.units = u;
    this.reconvert();
  }

  private reconvert(): void {
    this.setFactors();
    this.recomputeOverlays();
    if (this.latest) this.convertLive(this.latest);
    for (let c = 0; c < this.held.length; c++)
      convertInto(this.units, this.heldPsd[c], 0, this.held[c], this.display[c]);
    this.rebuild();
    if (this.cursorIdx !== null) this.showReadout(this.cursorIdx);
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
    // Masks widen the range only beside a baseline, an expected floor or data, so a mask alone never sets where
    // the traces may fall.
    const masks = this.maskShown.filter((_m, c) => this.maskAsd[c]);
    const reference = [...this.base, ...this.thr];
    const fixedRange =
      this.followY || !fixedDensityRange(reference, this.floor, log)
        ? null
        : fixedDensityRange([...reference, ...masks], this.floor, log);
    const data = [...this.live, ...this.held];
    const any = data.some((d) => d.some((v) => Number.isFinite(v)));
    return fixedRange || paddedRange(any ? [...data, ...masks] : data, log);
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
      const k = this.display[c];
      for (let i = 0; i < n; i++) {
        const raw = src[i + 1];
        if (raw > hp[i]) {
          hp[i] = raw;
          hd[i] = fromPsd(u, raw * k) ?? NaN;
        }
      }
    }
    this.redraw();
    if (this.cursorIdx !== null) this.showReadout(this.cursorIdx);
  }

  private convertLive(f: DecodedFrame): void {
    for (let c = 0; c < f.channels; c++) convertInto(this.units, f.values[c], 1, this.live[c], this.display[c]);
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
      convertInto(u, b.values[c], 1, out, this.display[c]);
      const name = this.ctx!.channels[c].name;
      for (const row of this.bands) {
        if (row.channel !== name || row.thresholdDb === null) continue;
        const gain = 10 ** (row.thresholdDb / 10);
        for (let i = 0; i < n; i++) {
          const fq = this.x[i];
          if (fq >= row.low && fq <= row.high) t[i] = fromPsd(u, b.values[c][i + 1] * gain * this.display[c]);
        }
      }
    }
    // The budget's floor belongs to the channel with the budget (else the first): scaled like that channel.
    const e = this.overlays.expectedFloor;
    const chans = this.ctx?.channels ?? [];
    const bc = Math.max(
      0,
      chans.findIndex((c) => c.front?.budget),
    );
    const scale = converterScale(u, chans[bc]?.front) ?? NaN;
    this.floor.fill(e === null ? NaN : (fromPsd(u, e * e * scale) ?? NaN));
    this.convertMasks();
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
      v == null || !Number.isFinite(v) ? '—' : isLogAxis(this.units) ? si(v, '') : `${v.toFixed(1)}`;
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
    // A limit mask in its channel's hue, dash-dot and wider than the traces, drawn where the mask reaches.
    for (let c = 0; c < C; c++)
      series.push({
        label: `${ctx.channels[c].name} limit mask`,
        stroke: channelColour(c),
        dash: [9, 3, 2, 3],
        width: 2,
        show: this.maskAsd[c] !== null && this.maskAsd[c] !== undefined,
        value: fmt,
        spanGaps: false,
      });
    this.data = [
      this.x,
      ...this.live,
      ...this.held,
      ...this.base,
      ...this.thr,
      this.floor,
      ...this.cum,
      ...this.maskShown,
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
            Number.isFinite(min) && Number.isFinite(max) && min > 0 && max >= min
              ? decadeRange(min / 2, max * 2)
              : [1e-9, 1e-3],
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
        draw: [(u) => this.drawBandLabels(u), (u) => this.drawMaskLabels(u)],
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

  /** The band labels placed by drawBackdrop, over the grid lines, each on a pale backing so it stays legible. */
  private drawBandLabels(u: uPlot): void {
    const c = u.ctx;
    const dpr = devicePixelRatio;
    c.save();
    c.font = `${Math.round(10 * dpr)}px system-ui, sans-serif`;
    c.textAlign = 'left'; // uPlot leaves the y axis's right alignment on the context
    c.textBaseline = 'alphabetic';
    for (const { label, x, y } of this.bandLabels) {
      const w = c.measureText(label).width;
      c.fillStyle = 'rgba(255, 255, 255, 0.85)';
      c.fillRect(x - 2 * dpr, y - 10 * dpr, w + 4 * dpr, 12 * dpr);
      c.fillStyle = '#4a545d';
      c.fillText(label, x, y);
    }
    c.restore();
  }

  /** Band shading and mains-harmonic markers, drawn under the traces. */
  private drawBackdrop(u: uPlot): void {
    const c = u.ctx;
    const { top, height, left, width } = u.bbox;
    c.save();
    const seen = new Set<string>();
    let shade = 0;
    this.bandLabels = [];
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
      // One label row per band, so bands that start together (a wide band over narrow ones) stay readable; the
      // labels are drawn after the grid and traces (drawBandLabels), on a backing of their own.
      if (c.measureText(label).width + 6 * devicePixelRatio < x1 - x0)
        this.bandLabels.push({
          label,
          x: x0 + 3 * devicePixelRatio,
          y: top + (12 + 12 * (shade - 1)) * devicePixelRatio,
        });
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

  /** Names each drawn mask at its right-hand end, in its channel's hue; says which could not be drawn. */
  private drawMaskLabels(u: uPlot): void {
    const chans = this.ctx?.channels ?? [];
    const c2 = u.ctx;
    const dpr = devicePixelRatio || 1;
    const { top, left, width } = u.bbox;
    c2.save();
    c2.font = `${Math.round(11 * dpr)}px system-ui, sans-serif`;
    c2.textAlign = 'right';
    const used: number[] = [];
    for (let c = 0; c < chans.length; c++) {
      const line = this.maskShown[c];
      if (!this.maskAsd[c] || !line) continue;
      let i = line.length - 1;
      const xMax = u.scales.x.max ?? Infinity;
      while (i >= 0 && (line[i] === null || this.x[i] > xMax)) i--;
      if (i < 0) continue;
      const m = this.masks.find((k) => k.channel === chans[c].name);
      const x = Math.min(left + width - 2 * dpr, u.valToPos(this.x[i], 'x', true));
      let y = Math.max(top + 12 * dpr, u.valToPos(line[i]!, 'y', true) - 5 * dpr);
      // Labels of masks that end at one place (one file for every channel) stack instead of overprinting.
      while (used.some((v) => Math.abs(v - y) < 12 * dpr)) y -= 13 * dpr;
      used.push(y);
      c2.fillStyle = channelColour(c);
      c2.fillText(`${chans[c].name} limit${m?.file ? ` (${m.file})` : ''}`, x, y);
    }
    c2.fillStyle = '#5b6670';
    this.maskNotes.forEach((t, k) => c2.fillText(t, left + width - 4 * dpr, top + u.bbox.height - (6 + 14 * k) * dpr));
    c2.restore();
  }

  private showReadout(idx: number): void {
    const ctx = this.ctx;
    const f = this.latest;
    if (!ctx || !f || idx < 0 || idx >= this.x.length) return;
    const parts = [`f = ${hz(this.x[idx])}`];
    const h = Math.ceil(this.lobeHalfWidth);
    for (let c = 0; c < f.channels; c++) {
      // Each channel in its own unit and referred point (a bridge in V at its input beside a current probe in A).
      const unit = ctx.channels[c]?.unit ?? 'V';
      const where = this.where(ctx.channels[c]?.front);
      // dsp/tone.ts reads float64; a copy only when the cursor moves, referred to the point shown
      const k = this.display[c];
      const psd = Float64Array.from(f.values[c], (v) => v * k);
      const bin = idx + 1;
      const d = fromPsd(this.units, psd[bin]);
      const dens = d === null ? '—' : formatDensity(this.units, d, unit, si) + where;
      // Line level: the largest bin within one main lobe of the cursor, its lobe's power less the local floor's
      // share (dsp/tone.ts lineAboveFloor, the rule the spur and mains events use; floor = local median as there).
      const peak = peakBin(psd, Math.max(1, bin - h), Math.min(psd.length - 1, bin + h));
      const floor = new RunningMedian(psd.length, Math.max(8, 4 * h)).at(psd, peak);
      const tone = lineAboveFloor(psd, ctx.binHz, this.lobeHalfWidth, peak, floor);
      parts.push(
        `${ctx.channels[c].name}: ${dens}, line ${formatAmplitude(this.units, tone.rms, unit, si)}${where} at ${hz(tone.frequency)}${this.noiseFigureText(c, floor)}`,
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
    const inputPsd = (floorAtView * psdFactor(front, 'input')) / this.display[c];
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
