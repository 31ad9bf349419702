// The log-frequency mode of the spectrum panel: per channel the live log-frequency ASD with its confidence band,
// the fitted 1/f model e_w·sqrt(1 + (f_c/f)^α), and the Welch baseline interpolated at the same points; a
// readout of the fit, a 0.1–10 Hz box (p-p, RMS, 6.6σ with the window's sample span), RBW and averages at the cursor.
import uPlot from 'uplot';
import type { DecodedFrame } from '../../protocol/frame.ts';
import type { LowFrequencyContext, LowFrequencyUpdate } from '../../protocol/low-frequency-messages.ts';
import { channelColour, channelDash, withAlpha } from '../colours.ts';
import { paddedRange } from './y-range.ts';
import { si, fixed, count } from '../format.ts';

const el = (tag: string, cls: string, text = ''): HTMLElement => {
  const e = document.createElement(tag);
  e.className = cls;
  e.textContent = text;
  return e;
};

export class LogFrequencyView {
  private plot: uPlot | null = null;
  private ctx: LowFrequencyContext | null = null;
  private data: (number | null)[][] = [[]];
  private latest: LowFrequencyUpdate | null = null;
  private baseline: { frame: DecodedFrame; binHz: number } | null = null;
  private cursorIdx: number | null = null;
  private shown = false;
  /** Whether the y range has been taken from data; after that frames keep the scales (and any zoom). */
  private scaled = false;
  private drawPending = false;
  /** Updates applied (tests read this). */
  applied = 0;

  constructor(
    private readonly chart: HTMLElement,
    private readonly readout: HTMLElement,
    private readonly fits: HTMLElement,
    private readonly peaks: HTMLElement,
    private readonly contextLine: HTMLElement,
  ) {
    new ResizeObserver(() => this.plot?.setSize({ width: Math.max(300, this.chart.clientWidth), height: 360 })).observe(
      chart,
    );
    chart.addEventListener('dblclick', () => this.resetZoom());
    chart.addEventListener('keydown', (e) => {
      if (e.key === 'Home' || e.key === 'Escape' || e.key === '0') {
        e.preventDefault();
        this.resetZoom();
        return;
      }
      const step = e.key === 'ArrowRight' ? 1 : e.key === 'ArrowLeft' ? -1 : 0;
      if (step === 0 || !this.plot || !this.ctx) return;
      e.preventDefault();
      const n = this.ctx.frequency.length;
      const idx = Math.min(n - 1, Math.max(0, (this.cursorIdx ?? Math.floor(n / 2)) + step));
      this.plot.setCursor({
        left: this.plot.valToPos(this.ctx.frequency[idx], 'x'),
        top: this.plot.bbox.height / (2 * devicePixelRatio),
      });
      this.cursorIdx = idx;
      this.showCursor();
    });
  }

  get context(): LowFrequencyContext | null {
    return this.ctx;
  }

  /** The newest update shown (for exports). */
  get shownUpdate(): LowFrequencyUpdate | null {
    return this.latest;
  }

  /** Back to the whole span and a y range taken afresh from the data. */
  resetZoom(): void {
    this.scaled = false;
    this.scheduleChart();
  }

  get canvas(): HTMLCanvasElement | null {
    return this.plot ? (this.plot.ctx.canvas as HTMLCanvasElement) : null;
  }

  show(on: boolean): void {
    this.shown = on;
    if (on && !this.plot && this.ctx) this.rebuild();
    if (on) this.draw();
  }

  setContext(ctx: LowFrequencyContext): void {
    this.ctx = ctx;
    this.latest = null;
    if (this.shown) this.rebuild();
  }

  /** The Welch baseline frame (PSD per bin): drawn as its ASD at the log-frequency points. */
  setBaseline(frame: DecodedFrame | null, binHz: number): void {
    this.baseline = frame ? { frame, binHz } : null;
    this.draw();
  }

  update(u: LowFrequencyUpdate): void {
    if (!this.ctx || u.contextId !== this.ctx.id) return;
    this.latest = u;
    this.applied++;
    this.draw();
  }

  private rebuild(): void {
    const ctx = this.ctx!;
    this.plot?.destroy();
    const fmt = (_u: uPlot, v: number | null): string =>
      v == null ? '—' : si(v, `${ctx.channels[0]?.unit ?? 'V'}/√Hz`);
    const series: uPlot.Series[] = [{ label: 'Hz' }];
    const bands: uPlot.Band[] = [];
    ctx.channels.forEach((c, i) => {
      const col = channelColour(i);
      const at = series.length;
      series.push({ label: c.name, stroke: col, dash: channelDash(i), width: 1.5, value: fmt });
      series.push({ label: `${c.name} upper`, stroke: withAlpha(col, 0.3), width: 0.5, value: fmt });
      series.push({ label: `${c.name} lower`, stroke: withAlpha(col, 0.3), width: 0.5, value: fmt });
      // Each channel's fit in its own colour, long-dashed and heavier, so two fits never look alike.
      series.push({ label: `${c.name} 1/f fit`, stroke: withAlpha(col, 0.95), dash: [12, 4], width: 2, value: fmt });
      series.push({ label: `${c.name} baseline`, stroke: withAlpha(col, 0.8), dash: [3, 3], width: 1, value: fmt });
      bands.push({ series: [at + 1, at + 2], fill: withAlpha(col, 0.14) });
    });
    this.data = series.map(() => new Array<number | null>(ctx.frequency.length).fill(null));
    this.data[0] = ctx.frequency.slice();
    this.plot = new uPlot(
      {
        width: Math.max(300, this.chart.clientWidth),
        height: 360,
        pxAlign: 0,
        legend: { show: true, live: false },
        bands,
        scales: {
          x: {
            time: false,
            distr: 3,
            log: 10,
            range: (_u, min, max) =>
              ctx.frequency.length ? [ctx.frequency[0], ctx.frequency[ctx.frequency.length - 1]] : [min, max],
          },
          y: { distr: 3, log: 10, range: (_u, min, max) => paddedRange([[min, max]], true) },
        },
        axes: [
          { label: 'Frequency, Hz (log-spaced points)', stroke: '#5b6670', grid: { stroke: '#e6e1d6' } },
          {
            label: `ASD, ${ctx.channels[0]?.unit ?? 'V'}/√Hz`,
            size: 70,
            values: (_u, vals) => vals.map((v) => (v == null ? '' : si(v, '', 2))),
            stroke: '#5b6670',
            grid: { stroke: '#e6e1d6' },
          },
        ],
        series,
        hooks: {
          setCursor: [
            (p) => {
              this.cursorIdx = p.cursor.idx ?? null;
              this.showCursor();
            },
          ],
        },
      },
      this.data as uPlot.AlignedData,
      this.chart,
    );
    // The confidence limits are drawn as a band: their own legend entries would only crowd the legend.
    const rows = this.plot.root.querySelectorAll<HTMLElement>('.u-legend .u-series');
    ctx.channels.forEach((_c, i) => {
      for (const k of [2, 3]) rows[5 * i + k]?.style.setProperty('display', 'none');
    });
    this.scaled = false;
  }

  private draw(): void {
    const ctx = this.ctx;
    const u = this.latest;
    if (!ctx || !this.shown) return;
    if (!this.plot) this.rebuild();
    const n = ctx.frequency.length;
    ctx.channels.forEach((c, i) => {
      const at = 1 + 5 * i;
      const ch = u?.channels[i];
      const fit = ch?.fit;
      const base = this.baseline?.frame.values[i];
      for (let p = 0; p < n; p++) {
        const f = ctx.frequency[p];
        this.data[at][p] = ch?.asd[p] ?? null;
        this.data[at + 1][p] = ch?.upper[p] ?? null;
        this.data[at + 2][p] = ch?.lower[p] ?? null;
        this.data[at + 3][p] =
          fit && f <= ctx.fitMaxHz ? fit.whiteAsd * Math.sqrt(1 + (fit.corner / f) ** fit.exponent) : null;
        this.data[at + 4][p] = base ? this.baselineAt(base, f) : null;
      }
    });
    this.scheduleChart();
    this.showFigures();
    this.showCursor();
  }

  /** One chart draw per animation frame; scales are reset only until the first data arrives or on reset. */
  private scheduleChart(): void {
    if (this.drawPending || !this.plot) return;
    this.drawPending = true;
    requestAnimationFrame(() => {
      this.drawPending = false;
      if (!this.plot) return;
      const hasData = this.data.slice(1).some((s) => s.some((v) => v !== null));
      this.plot.setData(this.data as uPlot.AlignedData, !this.scaled);
      if (this.scaled) this.plot.redraw(); // with scales kept, setData does not draw by itself
      if (hasData) this.scaled = true;
    });
  }

  /** Welch baseline ASD at f: linear interpolation of the PSD between the two nearest bins (none below bin 1). */
  private baselineAt(psd: Float32Array, f: number): number | null {
    const k = f / this.baseline!.binHz;
    const i = Math.floor(k);
    if (i < 1 || i + 1 >= psd.length) return null;
    const v = psd[i] + (k - i) * (psd[i + 1] - psd[i]);
    return v > 0 ? Math.sqrt(v) : null;
  }

  private showFigures(): void {
    const ctx = this.ctx!;
    const u = this.latest;
    const fitRows: HTMLElement[] = [];
    const ppRows: HTMLElement[] = [];
    ctx.channels.forEach((c, i) => {
      const ch = u?.channels[i];
      const fit = ch?.fit ?? null;
      const d = `${c.unit}/√Hz`;
      const row = el('p', 'lf-fit');
      row.dataset.channel = c.name;
      if (fit) {
        Object.assign(row.dataset, {
          white: String(fit.whiteAsd),
          corner: String(fit.corner),
          alpha: String(fit.exponent),
          sample: String(fit.sample),
        });
        row.textContent =
          `${c.name}: white ${si(fit.whiteAsd, d)} ± ${si(fit.whiteAsdSigma, d)} · corner ${si(fit.corner, 'Hz')} ± ${si(fit.cornerSigma, 'Hz')} · ` +
          `α ${fixed(fit.exponent, 2)} ± ${fit.exponentFree ? fixed(fit.exponentSigma, 2) : 'fixed'} (fit to ${fit.points} points${fit.excludedPoints ? `, ${fit.excludedPoints} left out as lines` : ''} at t = ${fixed(fit.t, 1)} s)`;
      } else row.textContent = `${c.name}: no 1/f fit yet (too few averaged points)`;
      fitRows.push(row);
      const pp = ch?.peakToPeak ?? null;
      const box = el('dl', 'lf-pp');
      box.dataset.channel = c.name;
      box.append(el('dt', '', c.name));
      if (pp) {
        Object.assign(box.dataset, {
          ptp: String(pp.peakToPeak),
          rms: String(pp.rms),
          g66: String(pp.gaussianPeakToPeak),
          sample: String(pp.sample),
        });
        for (const [label, v] of [
          ['peak-to-peak (max − min)', pp.peakToPeak],
          ['RMS', pp.rms],
          ['6.6σ (Gaussian-equivalent p-p)', pp.gaussianPeakToPeak],
        ] as const) {
          box.append(el('dd', '', `${label}: ${si(v, c.unit)}`));
        }
        box.append(
          el(
            'dd',
            'context',
            `samples ${count(pp.startSample)}–${count(pp.sample)} (t = ${fixed(pp.startSample / ctx.sampleRate, 1)}–${fixed(pp.t, 1)} s)`,
          ),
        );
      } else
        box.append(
          el(
            'dd',
            'context',
            ctx.peakToPeak
              ? `first window after ${fixed(ctx.peakToPeak.settleSeconds + ctx.peakToPeak.windowSeconds, 1)} s of sample time`
              : 'sample rate too low for 0.1–10 Hz',
          ),
        );
      ppRows.push(box);
    });
    this.contextLine.textContent =
      `${ctx.frequency.length} log-spaced points, each averaging ≤ ${ctx.spanSeconds} s · ${Math.round(ctx.level * 100)} % band (χ² on equivalent averages) · ` +
      `${ctx.updatesPerSecond} updates/s, a 1/f fit every ${ctx.fitEvery} to points ≤ ${si(ctx.fitMaxHz, 'Hz')}` +
      (u ? ` · t = ${fixed(u.t, 2)} s (sample ${count(u.sample)})` : '');
    this.fits.replaceChildren(...fitRows);
    this.peaks.replaceChildren(el('h3', '', '0.1–10 Hz noise'), ...ppRows);
  }

  private showCursor(): void {
    const ctx = this.ctx;
    const p = this.cursorIdx;
    if (!ctx || p === null || p < 0 || p >= ctx.frequency.length) return;
    const u = this.latest;
    const parts = ctx.channels.map((c, i) => `${c.name} ${si(u?.channels[i]?.asd[p] ?? null, `${c.unit}/√Hz`)}`);
    const avg = u?.channels[0]?.averages[p];
    Object.assign(this.readout.dataset, {
      index: String(p),
      frequency: String(ctx.frequency[p]),
      rbw: String(ctx.rbwHz[p]),
    });
    this.readout.textContent = `${si(ctx.frequency[p], 'Hz', 4)}: ${parts.join(' · ')} · RBW ${si(ctx.rbwHz[p], 'Hz')} · ${avg ?? 0} averages`;
  }
}
