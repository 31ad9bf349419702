// The dashboard application: routes agent messages to the views. `onJson` and `onBinary` are the only inputs,
// so the benchmark drives exactly the path live data takes.
import type { ServerMessage, AgentStatus, SpectrumContext } from '../protocol/messages.ts';
import type { FloorlineEvent } from '../protocol/events.ts';
import { alarmId } from '../protocol/ids.ts';
import { decodeFrame, type DecodedFrame } from '../protocol/frame.ts';
import { Link, type Request } from './connection.ts';
import { SpectrumView } from './views/spectrum.ts';
import { WaterfallView } from './views/waterfall.ts';
import { CoherenceView } from './views/coherence.ts';
import { BandTable, type BandUnits } from './views/band-table.ts';
import { EventList } from './views/event-list.ts';
import { IncidentPanel } from './views/incident-panel.ts';
import { TimelineView, pickSeries, timelineSpan, trendUrl, type TimelineQuery } from './views/timeline.ts';
import { attachReportLink } from './views/report-link.ts';
import type { TrendReply } from '../protocol/trend.ts';
import type { IncidentJson, IncidentsReply } from '../protocol/incidents.ts';
import type { SpectraReply } from '../protocol/spectra.ts';
import { TraceView } from './views/trace.ts';
import { MomentView } from './views/moment.ts';
import type { SpectrumReply } from '../protocol/spectra.ts';
import { HealthStrip } from './views/health.ts';
import { Controls } from './views/controls.ts';
import { NoiseBudgetForm } from './views/noise-budget.ts';
import { LogFrequencyView } from './views/log-frequency.ts';
import { download, spectrumPng } from './export.ts';
import { contextLine, spectrumCsv } from './spectrum-csv.ts';
import { logFrequencyCsv } from './log-frequency-csv.ts';
import { channelColour, channelDash } from './colours.ts';
import { isConverterUnit, type DensityUnit } from './units.ts';
import { type ReferredTo } from './referral.ts';
import { limitMasksProblem } from '../protocol/limit-masks.ts';

const $ = <T extends HTMLElement>(id: string): T => document.getElementById(id) as T;

export class App {
  readonly spectrum = new SpectrumView($('spectrum'), $('readout'));
  readonly coherence = new CoherenceView($('coherence'), $('coherence-info'));
  readonly waterfall = new WaterfallView(
    $('waterfall'),
    $('waterfall-legend'),
    $('waterfall-axis'),
    $('waterfall-freq'),
    $('waterfall-time'),
  );
  readonly bands = new BandTable(($('bands') as HTMLTableElement).tBodies[0]);
  readonly events = new EventList(($('events') as HTMLTableElement).tBodies[0], (e) => void this.acknowledge(e));
  readonly trace = new TraceView($('trace'));
  readonly incidents = new IncidentPanel(
    ($('incidents') as HTMLTableElement).tBodies[0],
    $('incident-message'),
    {
      // The agent takes an incident id for acknowledge and shelve: every alarm of the fault, and those that join it.
      acknowledge: (_ids, incident) =>
        this.forEachAlarm([incident], (alarm) => ({ type: 'acknowledge', alarm }), 'acknowledged'),
      shelve: (_ids, seconds, incident) =>
        this.forEachAlarm(
          [incident],
          (alarm) => ({ type: 'shelve', alarm, seconds }),
          `shelved for ${seconds / 60} min`,
        ),
      note: (text, incident) => this.addNote(text, incident),
    },
    (ch) => this.context?.channels.find((c) => c.name === ch)?.unit ?? 'V',
  );
  readonly timeline = new TimelineView($('timeline'), $('timeline-info'));
  readonly moment = new MomentView({
    panel: $('moment'),
    chart: $('moment-chart'),
    info: $('moment-info'),
    replay: $('moment-replay'),
  });
  /** /api/incidents answered (false: no history store on this agent, so the panel says so). */
  incidentsAvailable = true;
  readonly health = new HealthStrip($('health'), $('replay-banner'));
  readonly logFrequency = new LogFrequencyView(
    $('logf-chart'),
    $('logf-readout'),
    $('logf-fits'),
    $('logf-pp'),
    $('logf-context'),
  );
  readonly budget: NoiseBudgetForm;
  readonly controls: Controls;
  status: AgentStatus | null = null;
  context: SpectrumContext | null = null;
  /** Spectrum frames applied (tests and the benchmark read this). */
  spectraApplied = 0;
  private pendingBaseline: ArrayBuffer | null = null;
  private baselineFrame: DecodedFrame | null = null;
  private timelineStarted = false;
  /** The TIME bounds of the span the timeline drew last (the Report link asks for the same). */
  private timelineShown: { from: string; to: string } | undefined;
  /** The spectrum panel shows the log-frequency view (exports follow what is shown). */
  private logfMode = false;
  private contextShownAt = -Infinity;
  /** The budget form's total, referred to the amplifier input (unit/√Hz), or null when not shown. */
  private budgetFloor: number | null = null;

  constructor(readonly link: Link) {
    this.budget = new NoiseBudgetForm($('budget') as HTMLFormElement, $('nb-result'), (floor) => {
      this.budgetFloor = floor;
      this.showBudgetFloor();
    });
    $<HTMLInputElement>('cumulative').addEventListener('change', (e) =>
      this.spectrum.setCumulative((e.target as HTMLInputElement).checked),
    );
    $<HTMLSelectElement>('refer').addEventListener('change', (e) =>
      this.setReferral((e.target as HTMLSelectElement).value as ReferredTo),
    );
    this.controls = new Controls(link, {
      units: (u) => this.setUnits(u),
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
    ($('note-form') as HTMLFormElement).addEventListener('submit', (e) => {
      e.preventDefault();
      const input = $<HTMLInputElement>('note-text');
      const text = input.value.trim();
      if (!text) return;
      const incident = $<HTMLSelectElement>('note-incident').value || undefined;
      void this.addNote(text, incident).then((m) => {
        $('incident-message').textContent = m;
        input.value = '';
        void this.refreshIncidents();
      });
    });
    document.addEventListener('keydown', (e) => {
      const t = e.target as HTMLElement;
      if (e.key === 'n' && !e.ctrlKey && !e.metaKey && !['INPUT', 'SELECT', 'TEXTAREA'].includes(t.tagName)) {
        e.preventDefault();
        $<HTMLInputElement>('note-text').focus();
      }
    });
    setInterval(() => void this.refreshIncidents(), 2000);
    for (const id of ['timeline-channel', 'timeline-what', 'timeline-span'])
      $(id).addEventListener('change', () => void this.refreshTimeline());
    $('timeline-channel').addEventListener('change', () => this.fillTimelineChoices());
    attachReportLink(
      $<HTMLAnchorElement>('timeline-report'),
      () => this.timelineShown,
      () => this.timelineQuery(),
      () => (this.status?.replay ? this.status.t : null),
    );
    $('timeline-csv').addEventListener('click', () =>
      download('floorline-timeline.csv', this.timeline.csv(), 'text/csv'),
    );
    setInterval(() => void this.refreshTimeline(), 10_000);
    this.timeline.onPick = (wall, incident) => void this.showMoment(wall, incident);
    $('moment-close').addEventListener('click', () => this.moment.hide());
    $<HTMLSelectElement>('spectrum-mode').addEventListener('change', (e) =>
      this.setSpectrumMode((e.target as HTMLSelectElement).value === 'logf'),
    );
    $<HTMLInputElement>('show-coherence').addEventListener('change', (e) =>
      this.coherence.show((e.target as HTMLInputElement).checked),
    );
    this.waterfall.onRange = (low, high) => {
      $<HTMLInputElement>('waterfall-low').value = String(low);
      $<HTMLInputElement>('waterfall-high').value = String(high);
    };
    const userRange = (): void => {
      const low = Number($<HTMLInputElement>('waterfall-low').value);
      const high = Number($<HTMLInputElement>('waterfall-high').value);
      if (Number.isFinite(low) && Number.isFinite(high) && high > low) this.waterfall.setRange(low, high, 'user');
    };
    $('waterfall-low').addEventListener('change', userRange);
    $('waterfall-high').addEventListener('change', userRange);
    $('waterfall-range-reset').addEventListener('click', () => this.waterfall.clearUserRange(this.baselinePsd()));
    $<HTMLSelectElement>('waterfall-channel').addEventListener('change', (e) => {
      this.waterfall.channel = Number((e.target as HTMLSelectElement).value);
      this.waterfall.setBaselineFloor(this.baselinePsd());
      this.waterfall.clear();
      void this.prefillWaterfall();
    });
  }

  onJson(m: ServerMessage): void {
    switch (m.type) {
      case 'hello':
        this.events.reset(m.events);
        for (const e of m.events) this.incidents.noteEvent(e);
        void this.refreshIncidents();
        if (m.context) this.setContext(m.context);
        this.setStatus(m.status);
        void this.prefillWaterfall();
        break;
      case 'context':
        this.setContext(m.context);
        break;
      case 'status':
        this.setStatus(m.status);
        break;
      case 'event':
        this.events.add(m.event);
        this.incidents.noteEvent(m.event);
        void this.refreshIncidents();
        break;
      case 'lowfreq-context':
        this.logFrequency.setContext(m.context);
        break;
      case 'lowfreq':
        this.logFrequency.update(m.update);
        break;
      case 'coherence':
        this.coherence.update(m);
        break;
      case 'masks': {
        // Checked as the agent checked it: a page never draws a shape it does not understand.
        const problem = limitMasksProblem(m);
        if (problem) console.warn(`floorline: limit masks ignored: ${problem}`);
        else this.spectrum.setMasks(m.masks);
        break;
      }
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
      if (this.context && f.contextId === (this.context.id & 0xffff)) {
        this.spectrum.setBaseline(f);
        this.logFrequency.setBaseline(f, this.context.binHz);
        this.baselineFrame = f;
        this.waterfall.setBaselineFloor(this.baselinePsd());
      } else this.pendingBaseline = buf;
    } else if (f.kind === 'trace')
      this.trace.update(f, this.context?.channels.map((c) => c.name) ?? [], this.context?.channels[0]?.unit ?? 'V');
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

  /** Refers the spectrum, its overlays, the readout, the band table and the exports to the input or the ADC. */
  setReferral(view: ReferredTo): void {
    this.spectrum.setReferral(view);
    this.showUnitState();
  }

  /** The unit of the spectrum, the readout, the band table and the exports; dBFS and LSB are at the ADC. */
  setUnits(u: DensityUnit): void {
    this.spectrum.setUnits(u);
    this.showUnitState();
  }

  /** The referral switch says the point shown (and is fixed at the ADC for dBFS and LSB); the figures follow. */
  private showUnitState(): void {
    const refer = $<HTMLSelectElement>('refer');
    refer.value = this.spectrum.referredTo;
    refer.disabled = isConverterUnit(this.spectrum.unitChoice);
    refer.title = refer.disabled ? 'dBFS and LSB are re the converter: shown at the ADC' : '';
    $<HTMLSelectElement>('units').value = this.spectrum.unitChoice;
    this.showBudgetFloor();
    if (this.status) this.setStatus(this.status);
  }

  /** The budget is referred to the amplifier input; at the ADC it is that times the gain of its channel. */
  private showBudgetFloor(): void {
    const f = this.budgetFloor;
    const ch = this.context?.channels.find((c) => c.front?.budget) ?? this.context?.channels[0];
    const gain = this.spectrum.referredTo === 'adc' ? (ch?.front?.gain ?? 1) : 1;
    this.spectrum.setOverlays({ expectedFloor: f === null ? null : f * gain });
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
    const tl = $<HTMLSelectElement>('timeline-channel');
    const keepCh = tl.value;
    tl.replaceChildren(...ctx.channels.map((c) => new Option(c.name, c.name)));
    if (ctx.channels.some((c) => c.name === keepCh)) tl.value = keepCh;
    this.controls.showContext(ctx);
    this.budget.sampleRate = ctx.settings.sampleRate;
    this.budget.prefill(ctx.channels.find((c) => c.front?.budget)?.front);
    const gainKnown = ctx.channels.some((c) => c.front?.gain !== undefined);
    $('refer-label').hidden = !gainKnown;
    this.controls.showUnits(this.spectrum.unitChoices(), ctx.channels[0]?.unit ?? 'V', this.spectrum.unitChoice);
    $<HTMLSelectElement>('refer').value = this.spectrum.referredTo;
    $<HTMLSelectElement>('refer').disabled = isConverterUnit(this.spectrum.unitChoice);
    this.budget.recompute();
    $('spectral-context').textContent = contextLine(ctx, null);
    if (this.pendingBaseline) {
      const b = this.pendingBaseline;
      this.pendingBaseline = null;
      this.onBinary(b);
    }
  }

  /**
   * Fills the waterfall from the spectra the store kept over the span it shows, so a page load starts with
   * history instead of an empty canvas. A replay's span is in sample time (its wall labels come from the file).
   */
  async prefillWaterfall(): Promise<void> {
    const ctx = this.context;
    const st = this.status;
    const channel = ctx?.channels[this.waterfall.channel]?.name;
    if (!ctx || !st || !channel) return;
    const span = this.waterfall.spanSeconds;
    const replay = st.replay !== null;
    const nowWall = Date.parse(st.wallTime) / 1000;
    const from = replay ? `t=${Math.max(0, st.t - span)}` : new Date((nowWall - span) * 1000).toISOString();
    try {
      const q = new URLSearchParams({ channel, from, rows: String(Math.round(span / 5) + 2) });
      const r = await fetch(`api/spectra?${q.toString()}`, { credentials: 'same-origin' });
      if (!r.ok) return; // no store, or none kept yet: the waterfall fills live
      const body = (await r.json()) as SpectraReply;
      if (this.context !== ctx || ctx.channels[this.waterfall.channel]?.name !== channel) return;
      const latest = this.status ?? st;
      this.waterfall.prefill(
        body.rows,
        (row) => (replay ? row.t : Date.parse(row.wallTime) / 1000),
        replay ? latest.t : Date.parse(latest.wallTime) / 1000,
      );
    } catch {
      /* the link state shows a lost agent */
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
    this.coherence.setThresholds(s.coherence);
    // Band figures are amplitudes: referred (and scaled for dBFS or LSB) by the square root of the PSD factor,
    // the unit naming the point.
    const refer = new Map<string, BandUnits>();
    const factors = this.spectrum.displayFactors();
    const shown = this.spectrum.unitChoice;
    this.context?.channels.forEach((c, i) =>
      refer.set(c.name, {
        unit: c.unit + this.spectrum.where(c.front),
        amplitude: Math.sqrt(factors[i] ?? 1),
        shown,
      }),
    );
    this.bands.update(
      s.bands,
      new Map(s.channels.map((c) => [c.name, refer.get(c.name) ?? { unit: c.unit, amplitude: 1, shown: 'asd' }])),
      s.spectrumSample,
    );
    this.spectrum.setBands(s.bands);
    this.spectrum.setMains(s.mainsHz);
    this.events.markAcknowledged(s.alarms);
    this.controls.showStatus(s);
    const firstBands = !this.timelineStarted && s.bands.length > 0;
    this.fillTimelineChoices();
    if (firstBands) {
      this.timelineStarted = true;
      void this.refreshTimeline();
    }
  }

  /** The incidents from the agent's history store (the same JSON as `floorline incidents --json`). */
  async refreshIncidents(): Promise<void> {
    try {
      const r = await fetch('api/incidents', { credentials: 'same-origin' });
      if (!r.ok) {
        this.incidentsAvailable = false;
        $('incidents-context').textContent =
          `no incident history on this agent (${r.status}); the event log below still lists every alarm`;
        return;
      }
      this.incidentsAvailable = true;
      const body = (await r.json()) as IncidentsReply;
      this.incidents.update(body.incidents, this.status?.t ?? 0);
      const open = body.incidents.filter((i) => !i.end).length;
      $('incidents-context').textContent =
        `${body.incidents.length} incident${body.incidents.length === 1 ? '' : 's'}, ${open} open · one row per fault; its alarms are folded under it`;
    } catch {
      /* the link state shows a lost agent */
    }
  }

  private timelineQuery(): TimelineQuery {
    return {
      channel: $<HTMLSelectElement>('timeline-channel').value,
      what: $<HTMLSelectElement>('timeline-what').value || 'floor',
      span: ($<HTMLSelectElement>('timeline-span').value || 'hour') as TimelineQuery['span'],
    };
  }

  /** Band choices of the timeline's channel (from the band rows), keeping the current choice when it is still there. */
  private fillTimelineChoices(): void {
    const ch = $<HTMLSelectElement>('timeline-channel').value;
    const sel = $<HTMLSelectElement>('timeline-what');
    const keep = sel.value;
    const bands = (this.status?.bands ?? []).filter((b) => b.channel === ch);
    const opts = [
      new Option('floor density', 'floor'),
      ...bands.map(
        (b) => new Option(`band RMS ${b.low.toPrecision(4)}–${b.high.toPrecision(4)} Hz`, `${b.low}:${b.high}`),
      ),
    ];
    if (sel.options.length === opts.length && [...sel.options].every((o, k) => o.value === opts[k].value)) return;
    sel.replaceChildren(...opts);
    if ([...sel.options].some((o) => o.value === keep)) sel.value = keep;
  }

  /** Trend rows for the chosen channel, band and span, downsampled by the store to the chart's width. */
  async refreshTimeline(): Promise<void> {
    const q = this.timelineQuery();
    if (!q.channel) return;
    try {
      const span = timelineSpan(q, this.status?.replay ? this.status.t : null);
      const r = await fetch(trendUrl(q, $('timeline').clientWidth || 800, span), { credentials: 'same-origin' });
      if (!r.ok) {
        $('timeline-info').textContent = `no history on this agent (${r.status})`;
        return;
      }
      const reply = (await r.json()) as TrendReply;
      const idx = this.context?.channels.findIndex((c) => c.name === q.channel) ?? 0;
      this.timeline.show(
        pickSeries(reply, q),
        this.incidents.incidents.filter((i) => i.channel === q.channel),
        Math.max(0, idx),
      );
      this.timelineShown = span;
    } catch {
      /* the link state shows a lost agent */
    }
  }

  /**
   * The kept spectrum at a time picked on the timeline against the baseline; for an incident, at its peak (or
   * start) with its capture and the command that replays it.
   */
  async showMoment(wallSeconds: number, incident: IncidentJson | null): Promise<void> {
    const channel = incident?.channel ?? this.timelineQuery().channel;
    let at = wallSeconds * 1000;
    if (incident) {
      const rate = this.context?.settings.sampleRate ?? 0;
      const start = Date.parse(incident.start.wallTime);
      at = incident.peak && rate > 0 ? start + ((incident.peak.sample - incident.start.sample) / rate) * 1000 : start;
    }
    const q = new URLSearchParams({ channel, at: new Date(at).toISOString() });
    try {
      const r = await fetch(`api/spectrum?${q.toString()}`, { credentials: 'same-origin' });
      if (!r.ok) {
        const body = (await r.json().catch(() => null)) as { error?: { message?: string } } | null;
        $('timeline-info').textContent = `no kept spectrum for that time: ${body?.error?.message ?? r.status}`;
        return;
      }
      const s = (await r.json()) as SpectrumReply;
      const idx = Math.max(0, this.context?.channels.findIndex((c) => c.name === s.channel) ?? 0);
      const b = this.baselineFrame;
      this.moment.show(s, b && idx < b.channels ? b.values[idx] : null, idx, incident);
    } catch {
      /* the link state shows a lost agent */
    }
  }

  /** Sends one request per alarm of an incident and says how many took. */
  private async forEachAlarm(ids: string[], make: (alarm: string) => Request, done: string): Promise<string> {
    if (ids.length === 0) return 'no alarm of this incident is known to this page yet';
    let took = 0;
    const errors: string[] = [];
    for (const alarm of ids) {
      const r = await this.link.request(make(alarm));
      if (!r.ok) errors.push(r.error.message);
      else if ((r.result as { acknowledged?: boolean; shelved?: boolean }).acknowledged !== false) took++;
    }
    void this.refreshIncidents();
    return took === 0 && errors.length
      ? `${done} none: ${errors[0]}`
      : took === 0
        ? `${done} none: the incident has no raised alarm any more`
        : `${done}: the incident and its alarms`;
  }

  private async addNote(text: string, incident?: string): Promise<string> {
    const r = await this.link.request({ type: 'note', text, ...(incident ? { incident } : {}) });
    if (!r.ok) throw new Error(`note: ${r.error.message}`);
    const at = (r.result as { t?: number }).t;
    return `note stored${at !== undefined ? ` at t = ${at.toFixed(1)} s` : ''}`;
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
      if (lf.context && lf.shownUpdate)
        download(
          `floorline-log-frequency-${lf.shownUpdate.sample}.csv`,
          logFrequencyCsv(lf.context, lf.shownUpdate, this.status?.wallTime ?? ''),
          'text/csv',
        );
      return;
    }
    const f = this.spectrum.frame;
    if (!this.context || !f) return;
    download(
      `floorline-spectrum-${f.sample}.csv`,
      spectrumCsv(this.context, f, this.spectrum.unitChoice, this.status?.wallTime ?? '', {
        view: this.spectrum.referredTo,
        factors: this.spectrum.displayFactors(),
      }),
      'text/csv',
    );
  }

  private async exportPng(): Promise<void> {
    const lf = this.logFrequency;
    if (this.logfMode) {
      if (lf.canvas && lf.shownUpdate)
        download(
          `floorline-log-frequency-${lf.shownUpdate.sample}.png`,
          await spectrumPng(lf.canvas, $('logf-context').textContent ?? ''),
        );
      return;
    }
    const c = this.spectrum.canvas;
    const f = this.spectrum.frame;
    const ctx = this.context;
    if (!c || !ctx) return;
    const legend = ctx.channels.map((ch, i) => ({
      label: isConverterUnit(this.spectrum.unitChoice)
        ? ch.name
        : `${ch.name} (${ch.unit}${this.spectrum.where(ch.front)})`,
      colour: channelColour(i),
      dash: channelDash(i),
    }));
    const when = this.status?.wallTime ? ` · ${this.status.wallTime}` : '';
    download(
      `floorline-spectrum-${f?.sample ?? 0}.png`,
      await spectrumPng(c, contextLine(ctx, f) + when, legend, this.spectrum.densityLabel()),
    );
  }
}
