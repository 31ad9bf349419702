// The control panel: display choices act locally; analysis, baseline and recording go to the agent as requests.
import type { AveragingSpec } from '../../protocol/settings.ts';
import type { ReplyMessage, SpectrumContext, AgentStatus } from '../../protocol/messages.ts';
import type { Link } from '../connection.ts';
import { unitMenuLabel, type DensityUnit } from '../units.ts';

const SEGMENTS = [256, 512, 1024, 2048, 4096, 8192, 16384, 32768, 65536];

export interface ControlHooks {
  units(u: DensityUnit): void;
  maxHold(on: boolean): void;
  resetMaxHold(): void;
  baselineOverlay(on: boolean): void;
  mains(on: boolean): void;
  exportCsv(): void;
  exportPng(): void;
  exportEvents(): void;
  resetZoom(): void;
  followY(on: boolean): void;
}

/** A second click within this time confirms an action that was warned about. */
const CONFIRM_MS = 10_000;

const $ = <T extends HTMLElement>(id: string): T => document.getElementById(id) as T;

export class Controls {
  private recording = false;
  private recordingFileShown = true;
  private status: AgentStatus | null = null;
  /** Settings under which the band rules last compared against the baseline (for the way back). */
  private comparedSettings: { segment: number; window: string; averaging: AveragingSpec } | null = null;
  private comparisonOffSince: number | null = null;
  private settingsKey = '';
  private settingsSince = 0;
  private armed: { what: string; until: number } | null = null;

  constructor(
    private readonly link: Link,
    private readonly hooks: ControlHooks,
  ) {
    const seg = $<HTMLSelectElement>('segment');
    seg.replaceChildren(...SEGMENTS.map((n) => new Option(String(n), String(n))));
    $<HTMLSelectElement>('units').addEventListener('change', (e) =>
      hooks.units((e.target as HTMLSelectElement).value as DensityUnit),
    );
    $<HTMLInputElement>('maxhold').addEventListener('change', (e) =>
      hooks.maxHold((e.target as HTMLInputElement).checked),
    );
    $('maxhold-reset').addEventListener('click', () => hooks.resetMaxHold());
    $<HTMLInputElement>('show-baseline').addEventListener('change', (e) =>
      hooks.baselineOverlay((e.target as HTMLInputElement).checked),
    );
    $<HTMLInputElement>('show-mains').addEventListener('change', (e) =>
      hooks.mains((e.target as HTMLInputElement).checked),
    );
    $('export-csv').addEventListener('click', () => hooks.exportCsv());
    $('export-png').addEventListener('click', () => hooks.exportPng());
    $('export-events').addEventListener('click', () => hooks.exportEvents());
    $('apply-analysis').addEventListener('click', () => void this.applyAnalysis());
    $('capture-baseline').addEventListener('click', () => void this.captureBaseline());
    $('baseline-restore')?.addEventListener('click', () => void this.restoreBaseline());
    $('recording').addEventListener('click', () => void this.toggleRecording());
    $('zoom-reset')?.addEventListener('click', () => hooks.resetZoom());
    $<HTMLInputElement>('follow-y')?.addEventListener('change', (e) =>
      hooks.followY((e.target as HTMLInputElement).checked),
    );
    $('comparison-restore')?.addEventListener('click', () => void this.restoreComparison());
    document.addEventListener('keydown', (e) => this.onKey(e));
  }

  private say(text: string, error = false): void {
    const p = $('control-message');
    p.textContent = text;
    p.classList.toggle('error', error);
  }

  private async send(what: string, run: () => Promise<ReplyMessage>): Promise<ReplyMessage | null> {
    try {
      let r = await run();
      // The agent takes one control action a second: a click right after another waits its turn once.
      if (!r.ok && r.error.code === 'rate-limited') {
        this.say(`${what}: waiting a moment (the agent takes one control action a second)…`);
        await new Promise((ok) => setTimeout(ok, 1100));
        r = await run();
      }
      if (!r.ok) this.say(`${what}: ${r.error.message}`, true);
      return r.ok ? r : null;
    } catch (err) {
      this.say(`${what}: ${(err as Error).message}`, true);
      return null;
    }
  }

  /** Shows the settings in effect (after connect or a change). */
  showContext(ctx: SpectrumContext): void {
    $<HTMLSelectElement>('segment').value = String(ctx.settings.segment);
    const win = $<HTMLSelectElement>('window');
    if (![...win.options].some((o) => o.value === ctx.settings.window)) win.add(new Option(ctx.settings.window));
    win.value = ctx.settings.window;
    const a = ctx.averaging;
    $<HTMLSelectElement>('avg-mode').value = a.mode;
    const v = a.mode === 'exponential' ? a.tauSeconds : a.mode === 'rolling' || a.mode === 'median' ? a.count : '';
    $<HTMLInputElement>('avg-value').value = String(v);
  }

  /** The units menu for this stream: its channel unit, and dBFS/LSB only where the converter is known. */
  showUnits(choices: readonly DensityUnit[], unit: string, current: DensityUnit): void {
    const sel = $<HTMLSelectElement>('units');
    const opts = choices.map((u) => new Option(unitMenuLabel(u, unit), u));
    if (sel.options.length !== opts.length || [...sel.options].some((o, k) => o.text !== opts[k].text))
      sel.replaceChildren(...opts);
    sel.value = current;
  }

  showStatus(s: AgentStatus): void {
    if (s.bands) this.status = s;
    this.recording = s.recording.state === 'recording';
    const b = $('recording');
    b.textContent = this.recording ? 'Stop recording' : 'Start recording';
    b.classList.toggle('danger', this.recording);
    // The recorder opens its file with the next block: name it once status carries it.
    if (!this.recordingFileShown && s.recording.file) {
      this.recordingFileShown = true;
      this.say(`recording to ${s.recording.file}`);
    }
    if (s.bands) {
      this.showComparison(s);
      this.showBaseline(s);
    }
  }

  /** The baseline in use (file and settings hash) and, when the agent keeps one, the way back to the previous. */
  private showBaseline(s: AgentStatus): void {
    const now = document.getElementById('baseline-now');
    const text = s.baseline
      ? `Comparing against ${s.baseline.file} (settings hash ${s.baseline.hash.slice(0, 12)})`
      : 'No baseline: band alarms are off until one is captured.';
    if (now && now.textContent !== text) now.textContent = text;
    const b = document.getElementById('baseline-restore') as HTMLButtonElement | null;
    if (!b) return;
    const prev = s.previousBaseline ?? null;
    b.hidden = prev === null;
    const label = prev ? `Restore previous baseline (${prev.file})` : 'Restore previous baseline';
    if (b.textContent !== label) b.textContent = label;
  }

  private async restoreBaseline(): Promise<void> {
    const s = this.status;
    const prev = s?.previousBaseline;
    if (!s || !prev) return;
    if (
      !this.confirmed(
        'restore-baseline',
        `Compare against ${prev.file} again instead of ${s.baseline?.file ?? 'no baseline'}? The alarm rules restart.`,
      )
    )
      return;
    const r = await this.send('restore baseline', () => this.link.request({ type: 'restore-baseline' }));
    if (r && r.ok && r.request === 'restore-baseline')
      this.say(`comparing against ${r.result.file} again; ${r.result.previous} can be restored the same way`);
  }

  /** True while the band rules compare against the baseline (some band row has a threshold). */
  private static comparing(s: AgentStatus): boolean {
    return s.baseline !== null && s.bands.some((r) => r.thresholdDb !== null);
  }

  /** A persistent banner whenever a baseline is loaded but the band comparison is off. */
  private showComparison(s: AgentStatus): void {
    const banner = document.getElementById('comparison-banner');
    const on = Controls.comparing(s);
    // Band rows of the spectrum before a settings change still carry thresholds: take the settings as compared
    // only once a status has shown them for two seconds of sample time.
    const key = s.settings ? `${s.settings.segment}|${s.settings.window}|${JSON.stringify(s.averaging)}` : '';
    if (key !== this.settingsKey) {
      this.settingsKey = key;
      this.settingsSince = s.t;
    }
    if (on && s.settings && s.averaging && s.t - this.settingsSince >= 2) {
      this.comparedSettings = { segment: s.settings.segment, window: s.settings.window, averaging: s.averaging };
    }
    const off = s.baseline !== null && !on && s.bands.length > 0;
    if (off && this.comparisonOffSince === null) this.comparisonOffSince = s.t;
    if (!off) this.comparisonOffSince = null;
    if (!banner) return;
    banner.hidden = !off;
    const text = document.getElementById('comparison-text');
    if (off && text) {
      text.textContent = `Baseline comparison off since t = ${(this.comparisonOffSince ?? s.t).toFixed(1)} s: the analysis settings differ from the baseline's, so band alarms are not judged.`;
    }
    const back = document.getElementById('comparison-restore') as HTMLButtonElement | null;
    if (back) back.hidden = this.comparedSettings === null;
  }

  private async restoreComparison(): Promise<void> {
    const c = this.comparedSettings;
    if (!c) return;
    const r = await this.send('analysis', () =>
      this.link.request({ type: 'set-analysis', averaging: c.averaging, segment: c.segment, window: c.window }),
    );
    if (r)
      this.say(`back to segment ${c.segment}, ${c.window}: the baseline comparison resumes with the next spectrum`);
  }

  /** First call warns and arms; a second call within CONFIRM_MS goes ahead. */
  private confirmed(what: string, warning: string): boolean {
    const now = Date.now();
    if (this.armed && this.armed.what === what && now < this.armed.until) {
      this.armed = null;
      return true;
    }
    this.armed = { what, until: now + CONFIRM_MS };
    this.say(`${warning} Press again within ${CONFIRM_MS / 1000} s to go ahead.`, true);
    return false;
  }

  private averaging(): AveragingSpec {
    const mode = $<HTMLSelectElement>('avg-mode').value;
    const v = Number($<HTMLInputElement>('avg-value').value);
    if (mode === 'exponential') return { mode, tauSeconds: v };
    if (mode === 'rolling' || mode === 'median') return { mode, count: Math.round(v) };
    return { mode: mode as 'mean' | 'max' };
  }

  private async applyAnalysis(): Promise<void> {
    const seg = Number($<HTMLSelectElement>('segment').value);
    const win = $<HTMLSelectElement>('window').value;
    const c = this.comparedSettings;
    if (this.status && Controls.comparing(this.status) && c && (c.segment !== seg || c.window !== win)) {
      if (
        !this.confirmed(
          'apply',
          `The baseline was taken with segment ${c.segment} and ${c.window}: with segment ${seg} and ${win} the band alarms stop comparing against it.`,
        )
      )
        return;
    }
    const r = await this.send('analysis', () =>
      this.link.request({
        type: 'set-analysis',
        averaging: this.averaging(),
        segment: Number($<HTMLSelectElement>('segment').value),
        window: $<HTMLSelectElement>('window').value,
      }),
    );
    if (r) this.say('analysis change sent; estimates restart with the next spectrum');
  }

  private async captureBaseline(): Promise<void> {
    const seconds = Number($<HTMLInputElement>('baseline-seconds').value);
    const raised = this.status?.alarms.filter((a) => a.state === 'raised') ?? [];
    if (raised.length > 0) {
      const what = [...new Set(raised.map((a) => `${a.rule} on ${a.channel}`))].join(', ');
      if (
        !this.confirmed(
          'baseline',
          `Alarms are raised (${what}): a baseline captured now would hold the fault and hide it.`,
        )
      )
        return;
    }
    this.say(`capturing a baseline over the next ${seconds} s of sample time…`);
    const r = await this.send('baseline', () => this.link.request({ type: 'capture-baseline', seconds }));
    if (r && r.ok && r.request === 'capture-baseline') this.say(`baseline saved: ${r.result.file}`);
  }

  private async toggleRecording(): Promise<void> {
    const r = await this.send('recording', () =>
      this.link.request({ type: 'recording', action: this.recording ? 'stop' : 'start' }),
    );
    if (r && r.ok && r.request === 'recording') {
      this.showStatus({ recording: r.result.recording } as AgentStatus);
      const rec = r.result.recording;
      this.recordingFileShown = rec.state !== 'recording' || rec.file !== undefined;
      this.say(
        rec.state === 'recording'
          ? rec.file
            ? `recording to ${rec.file}`
            : 'recording starts with the next block of samples…'
          : 'recording stopped',
      );
    }
  }

  private onKey(e: KeyboardEvent): void {
    const t = e.target as HTMLElement;
    if (e.ctrlKey || e.metaKey || e.altKey || ['INPUT', 'SELECT', 'TEXTAREA'].includes(t.tagName)) return;
    if (e.key === 'm') {
      const box = $<HTMLInputElement>('maxhold');
      box.checked = !box.checked;
      this.hooks.maxHold(box.checked);
    } else if (e.key === 'r') this.hooks.resetMaxHold();
    else if (e.key === 'z') this.hooks.resetZoom();
    else if (e.key === 'u') {
      // The next entry of the menu: it lists only the units this stream offers.
      const sel = $<HTMLSelectElement>('units');
      const n = sel.options.length;
      if (n === 0) return;
      sel.selectedIndex = (sel.selectedIndex + 1) % n;
      this.hooks.units(sel.value as DensityUnit);
    }
  }
}
