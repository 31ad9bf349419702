// The dashboard application: routes agent messages to the views. `onJson` and `onBinary` are the only inputs,
// so the benchmark drives exactly the path live data takes.
import type { ServerMessage, AgentStatus, SpectrumContext } from '../protocol/messages.ts';
import type { FloorlineEvent } from '../protocol/events.ts';
import { alarmId } from '../protocol/ids.ts';
import { decodeFrame, type DecodedFrame } from '../protocol/frame.ts';
import { Link } from './connection.ts';
import { SpectrumView } from './views/spectrum.ts';
import { WaterfallView } from './views/waterfall.ts';
import { BandTable } from './views/band-table.ts';
import { EventList } from './views/event-list.ts';
import { TraceView } from './views/trace.ts';
import { HealthStrip } from './views/health.ts';
import { Controls } from './views/controls.ts';
import { NoiseBudgetForm } from './views/noise-budget.ts';
import { LogFrequencyView } from './views/log-frequency.ts';
import { contextLine, download, spectrumCsv, spectrumPng } from './export.ts';
import { logFrequencyCsv } from './log-frequency-csv.ts';
import { channelColour, channelDash } from './colours.ts';
import { densityLabel } from './units.ts';

const $ = <T extends HTMLElement>(id: string): T => document.getElementById(id) as T;

export class App {
  readonly spectrum = new SpectrumView($('spectrum'), $('readout'));
  readonly waterfall = new WaterfallView($('waterfall'), $('waterfall-legend'), $('waterfall-axis'), $('waterfall-freq'), $('waterfall-time'));
  readonly bands = new BandTable(($('bands') as HTMLTableElement).tBodies[0]);
  readonly events = new EventList(($('events') as HTMLTableElement).tBodies[0], (e) => void this.acknowledge(e));
  readonly trace = new TraceView($('trace'));
  readonly health = new HealthStrip($('health'), $('replay-banner'));
  readonly logFrequency = new LogFrequencyView($('logf-chart'), $('logf-readout'), $('logf-fits'), $('logf-pp'), $('logf-context'));
  readonly budget: NoiseBudgetForm;
  readonly controls: Controls;
  status: AgentStatus | null = null;
  context: SpectrumContext | null = null;
  /** Spectrum frames applied (tests and the benchmark read this). */
  spectraApplied = 0;
  private pendingBaseline: ArrayBuffer | null = null;
  private baselineFrame: DecodedFrame | null = null;
  /** The spectrum panel shows the log-frequency view (exports follow what is shown). */
  private logfMode = false;
  private contextShownAt = -Infinity;

  constructor(readonly link: Link) {
    this.budget = new NoiseBudgetForm($('budget') as HTMLFormElement, $('nb-result'), (floor) => this.spectrum.setOverlays({ expectedFloor: floor }));
    this.controls = new Controls(link, {
      units: (u) => this.spectrum.setUnits(u),
      maxHold: (on) => this.spectrum.setOverlays({ maxHold: on }),
      resetMaxHold: () => this.spectrum.resetMaxHold(),
      baselineOverlay: (on) => this.spectrum.setOverlays({ baseline: on }),
      mains: (on) => this.spectrum.setOverlays({ mains: on }),
      exportCsv: () => this.exportCsv(),
      exportPng: () => void this.exportPng(),
      exportEvents: () => download('floorline-events.jsonl', this.events.toJsonLines(), 'application/jsonl'),
      resetZoom: () => (this.logfMode ? this.logFrequency.resetZoom() : this.spectrum.resetZoom()),
      followY: (on) => this.spectrum.setFollowY(on),
    });
    new ResizeObserver(() => this.alignWaterfall()).observe($('spectrum'));
    $<HTMLSelectElement>('spectrum-mode').addEventListener('change', (e) => this.setSpectrumMode((e.target as HTMLSelectElement).value === 'logf'));
    $<HTMLSelectElement>('waterfall-channel').addEventListener('change', (e) => {
      this.waterfall.channel = Number((e.target as HTMLSelectElement).value);
      this.waterfall.setBaselineFloor(this.baselinePsd());
      this.waterfall.clear();
    });
  }

  onJson(m: ServerMessage): void {
    switch (m.type) {
      case 'hello':
        this.events.reset(m.events);
        if (m.context) this.setContext(m.context);
        this.setStatus(m.status);
        break;
      case 'context':
        this.setContext(m.context);
        break;
      case 'status':
        this.setStatus(m.status);
        break;
      case 'event':
        this.events.add(m.event);
        break;
      case 'lowfreq-context':
        this.logFrequency.setContext(m.context);
        break;
      case 'lowfreq':
        this.logFrequency.update(m.update);
        break;
      case 'info':
      case 'reply':
      case 'error':
        break;
    }
  }

  onBinary(buf: ArrayBuffer): void {
    const f = decodeFrame(buf);
    if (f.kind === 'spectrum') this.applySpectrum(f);
    else if (f.kind === 'baseline') {
      if (this.context && (f.contextId === (this.context.id & 0xffff))) {
        this.spectrum.setBaseline(f);
        this.logFrequency.setBaseline(f, this.context.binHz);
        this.baselineFrame = f;
        this.waterfall.setBaselineFloor(this.baselinePsd());
      }
      else this.pendingBaseline = buf;
    } else if (f.kind === 'trace') this.trace.update(f, this.context?.channels.map((c) => c.name) ?? [], this.context?.channels[0]?.unit ?? 'V');
  }

  private applySpectrum(f: DecodedFrame): void {
    const ctx = this.context;
    if (!ctx || f.contextId !== (ctx.id & 0xffff)) return; // from before a settings change
    this.spectrum.update(f);
    this.waterfall.push(f.values[Math.min(this.waterfall.channel, f.channels - 1)], f.sample / f.sampleRate);
    // Text changes cost a layout: the context line (it carries t and the averages) is refreshed 4 times a second.
    const now = performance.now();
    if (now - this.contextShownAt > 250) {
      this.contextShownAt = now;
      $('spectral-context').textContent = contextLine(ctx, f);
    }
    this.spectraApplied++;
  }

  /** Linear bins (Welch) or the log-frequency view in the spectrum panel; alarms come from the Welch rules either way. */
  setSpectrumMode(logf: boolean): void {
    this.logfMode = logf;
    $('welch-view').hidden = logf;
    $('logf-view').hidden = !logf;
    this.logFrequency.show(logf);
  }

  private setContext(ctx: SpectrumContext): void {
    this.context = ctx;
    this.spectrum.setContext(ctx);
    this.waterfall.setContext(ctx.bins, ctx.binHz, ctx.channels[0]?.unit ?? 'V');
    this.alignWaterfall();
    const sel = $<HTMLSelectElement>('waterfall-channel');
    sel.replaceChildren(...ctx.channels.map((c, i) => new Option(c.name, String(i))));
    this.waterfall.channel = 0;
    this.controls.showContext(ctx);
    this.budget.sampleRate = ctx.settings.sampleRate;
    this.budget.recompute();
    $('spectral-context').textContent = contextLine(ctx, null);
    if (this.pendingBaseline) {
      const b = this.pendingBaseline;
      this.pendingBaseline = null;
      this.onBinary(b);
    }
  }

  /** The baseline PSD of the waterfall's channel (sets its colour range), or null. */
  private baselinePsd(): Float32Array | null {
    const f = this.baselineFrame;
    return f && this.waterfall.channel < f.channels ? f.values[this.waterfall.channel] : null;
  }

  /** Puts the waterfall under the spectrum's plot area, so one frequency sits in one screen column in both. */
  private alignWaterfall(): void {
    const box = this.spectrum.plotBox();
    if (!box) return;
    const chart = $('spectrum').getBoundingClientRect();
    const wrap = $('waterfall').parentElement!.getBoundingClientRect();
    this.waterfall.align(Math.max(0, chart.left + box.left - wrap.left), box.width);
  }

  private setStatus(s: AgentStatus): void {
    this.status = s;
    this.health.update(s);
    this.bands.update(s.bands, new Map(s.channels.map((c) => [c.name, c.unit])), s.spectrumSample);
    this.spectrum.setBands(s.bands);
    this.spectrum.setMains(s.mainsHz);
    this.events.markAcknowledged(s.alarms);
    this.controls.showStatus(s);
  }

  private async acknowledge(e: FloorlineEvent): Promise<void> {
    const say = (text: string): void => {
      const p = $('control-message');
      p.textContent = text;
      p.classList.toggle('error', !text.startsWith('acknowledged'));
    };
    try {
      const r = await this.link.request({ type: 'acknowledge', alarm: alarmId(e) });
      if (!r.ok) say(`acknowledge: ${r.error.message}`);
      else if (r.request === 'acknowledge' && r.result.acknowledged) say(`acknowledged: ${e.rule} on ${e.channel}`);
      else say(`acknowledge: no ${e.rule} alarm on ${e.channel} is active any more`);
    } catch (err) {
      say(`acknowledge: ${(err as Error).message}`);
    }
  }

  private exportCsv(): void {
    const lf = this.logFrequency;
    if (this.logfMode) {
      if (lf.context && lf.shownUpdate) download(`floorline-log-frequency-${lf.shownUpdate.sample}.csv`, logFrequencyCsv(lf.context, lf.shownUpdate, this.status?.wallTime ?? ''), 'text/csv');
      return;
    }
    const f = this.spectrum.frame;
    if (!this.context || !f) return;
    download(`floorline-spectrum-${f.sample}.csv`, spectrumCsv(this.context, f, this.spectrum.unitChoice, this.status?.wallTime ?? ''), 'text/csv');
  }

  private async exportPng(): Promise<void> {
    const lf = this.logFrequency;
    if (this.logfMode) {
      if (lf.canvas && lf.shownUpdate) download(`floorline-log-frequency-${lf.shownUpdate.sample}.png`, await spectrumPng(lf.canvas, $('logf-context').textContent ?? ''));
      return;
    }
    const c = this.spectrum.canvas;
    const f = this.spectrum.frame;
    const ctx = this.context;
    if (!c || !ctx) return;
    const legend = ctx.channels.map((ch, i) => ({ label: `${ch.name} (${ch.unit})`, colour: channelColour(i), dash: channelDash(i) }));
    const when = this.status?.wallTime ? ` · ${this.status.wallTime}` : '';
    download(`floorline-spectrum-${f?.sample ?? 0}.png`, await spectrumPng(c, contextLine(ctx, f) + when, legend, densityLabel(this.spectrum.unitChoice, ctx.channels[0]?.unit ?? 'V')));
  }
}
