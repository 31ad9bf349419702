// The control panel: display choices act locally; analysis, baseline and recording go to the agent as requests.
import type { AveragingSpec } from '../../protocol/settings.ts';
import type { ReplyMessage, SpectrumContext, AgentStatus } from '../../protocol/messages.ts';
import type { Link } from '../connection.ts';
import { DENSITY_UNITS, type DensityUnit } from '../units.ts';

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
}

const $ = <T extends HTMLElement>(id: string): T => document.getElementById(id) as T;

export class Controls {
  private recording = false;

  constructor(
    private readonly link: Link,
    private readonly hooks: ControlHooks,
  ) {
    const seg = $<HTMLSelectElement>('segment');
    seg.replaceChildren(...SEGMENTS.map((n) => new Option(String(n), String(n))));
    $<HTMLSelectElement>('units').addEventListener('change', (e) => hooks.units((e.target as HTMLSelectElement).value as DensityUnit));
    $<HTMLInputElement>('maxhold').addEventListener('change', (e) => hooks.maxHold((e.target as HTMLInputElement).checked));
    $('maxhold-reset').addEventListener('click', () => hooks.resetMaxHold());
    $<HTMLInputElement>('show-baseline').addEventListener('change', (e) => hooks.baselineOverlay((e.target as HTMLInputElement).checked));
    $<HTMLInputElement>('show-mains').addEventListener('change', (e) => hooks.mains((e.target as HTMLInputElement).checked));
    $('export-csv').addEventListener('click', () => hooks.exportCsv());
    $('export-png').addEventListener('click', () => hooks.exportPng());
    $('export-events').addEventListener('click', () => hooks.exportEvents());
    $('apply-analysis').addEventListener('click', () => void this.applyAnalysis());
    $('capture-baseline').addEventListener('click', () => void this.captureBaseline());
    $('recording').addEventListener('click', () => void this.toggleRecording());
    document.addEventListener('keydown', (e) => this.onKey(e));
  }

  private say(text: string, error = false): void {
    const p = $('control-message');
    p.textContent = text;
    p.classList.toggle('error', error);
  }

  private async send(what: string, run: () => Promise<ReplyMessage>): Promise<ReplyMessage | null> {
    try {
      const r = await run();
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

  showStatus(s: AgentStatus): void {
    this.recording = s.recording.state === 'recording';
    const b = $('recording');
    b.textContent = this.recording ? 'Stop recording' : 'Start recording';
    b.classList.toggle('danger', this.recording);
  }

  private averaging(): AveragingSpec {
    const mode = $<HTMLSelectElement>('avg-mode').value;
    const v = Number($<HTMLInputElement>('avg-value').value);
    if (mode === 'exponential') return { mode, tauSeconds: v };
    if (mode === 'rolling' || mode === 'median') return { mode, count: Math.round(v) };
    return { mode: mode as 'mean' | 'max' };
  }

  private async applyAnalysis(): Promise<void> {
    const r = await this.send('analysis', () =>
      this.link.request({ type: 'set-analysis', averaging: this.averaging(), segment: Number($<HTMLSelectElement>('segment').value), window: $<HTMLSelectElement>('window').value }),
    );
    if (r) this.say('analysis change sent; estimates restart with the next spectrum');
  }

  private async captureBaseline(): Promise<void> {
    const seconds = Number($<HTMLInputElement>('baseline-seconds').value);
    this.say(`capturing a baseline over the next ${seconds} s of sample time…`);
    const r = await this.send('baseline', () => this.link.request({ type: 'capture-baseline', seconds }));
    if (r && r.ok && r.request === 'capture-baseline') this.say(`baseline saved: ${r.result.file}`);
  }

  private async toggleRecording(): Promise<void> {
    const r = await this.send('recording', () => this.link.request({ type: 'recording', action: this.recording ? 'stop' : 'start' }));
    if (r && r.ok && r.request === 'recording') {
      this.showStatus({ recording: r.result.recording } as AgentStatus);
      this.say(r.result.recording.state === 'recording' ? `recording to ${r.result.recording.file}` : 'recording stopped');
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
    else if (e.key === 'u') {
      const sel = $<HTMLSelectElement>('units');
      const next = DENSITY_UNITS[(DENSITY_UNITS.indexOf(sel.value as DensityUnit) + 1) % DENSITY_UNITS.length];
      sel.value = next;
      this.hooks.units(next);
    }
  }
}
