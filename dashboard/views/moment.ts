// The spectrum at a moment picked on the timeline: the store's kept spectrum nearest that time against the
// baseline reduced to the same log grid (dsp/log-grid.ts, so the two compare point by point), with the largest
// rise over the baseline, and for an incident its capture and the command that replays it.
import uPlot from 'uplot';
import type { SpectrumReply } from '../../protocol/spectra.ts';
import type { IncidentJson } from '../../protocol/incidents.ts';
import { logGridFrequencies, reduceToLogGrid } from '../../dsp/log-grid.ts';
import { powerRatioDb } from '../../dsp/units.ts';
import { channelColour, channelDash } from '../colours.ts';
import { hz, si } from '../format.ts';
import { siAxis } from './si-axis.ts';

export interface MomentElements {
  panel: HTMLElement;
  chart: HTMLElement;
  info: HTMLElement;
  replay: HTMLElement;
}

export class MomentView {
  private plot: uPlot | null = null;
  /** What is shown (tests read it). */
  shown: { spectrum: SpectrumReply; baseline: Float64Array | null; incident: string | null } | null = null;

  constructor(private readonly e: MomentElements) {
    new ResizeObserver(() => this.plot?.setSize({ width: this.width(), height: 220 })).observe(e.panel);
  }

  private width(): number {
    return Math.max(300, this.e.chart.clientWidth || this.e.panel.clientWidth);
  }

  /**
   * Shows a kept spectrum; `baselinePsd` is the baseline's density on its own bins (first bin to Nyquist), or
   * null. `incident` adds its capture and replay command.
   */
  show(
    s: SpectrumReply,
    baselinePsd: ArrayLike<number> | null,
    colourIndex: number,
    incident: IncidentJson | null,
  ): void {
    const n = s.density.length;
    const f = logGridFrequencies(n, s.fLow, s.fHigh);
    const base =
      baselinePsd && baselinePsd.length > 2
        ? reduceToLogGrid(baselinePsd, s.fHigh / (baselinePsd.length - 1), s.fLow, s.fHigh, new Float64Array(n))
        : null;
    this.shown = { spectrum: s, baseline: base, incident: incident?.id ?? null };
    const asd = (v: number): number | null => (v > 0 ? Math.sqrt(v) : null);
    const data = [Array.from(f), s.density.map(asd), base ? Array.from(base, asd) : Array.from(f, () => null)];
    const unit = `${s.unit}/√Hz`;
    this.e.panel.hidden = false;
    this.plot?.destroy();
    const col = channelColour(colourIndex);
    const fmt = (_u: uPlot, v: number | null): string => (v == null ? '—' : si(v, unit));
    this.plot = new uPlot(
      {
        width: this.width(),
        height: 220,
        legend: { show: true, live: true },
        scales: { x: { time: false, distr: 3, log: 10, range: [s.fLow, s.fHigh] }, y: { distr: 3, log: 10 } },
        axes: [{ label: 'Frequency, Hz', stroke: '#5b6670', grid: { stroke: '#e6e1d6' } }, siAxis(unit)],
        series: [
          { label: 'Hz', value: (_u, v) => (v == null ? '—' : hz(v)) },
          {
            label: `${s.channel} at ${s.wallTime}`,
            stroke: col,
            dash: channelDash(colourIndex),
            width: 1.5,
            value: fmt,
          },
          { label: 'baseline', stroke: col, dash: [5, 4], width: 1, alpha: 0.7, value: fmt },
        ],
      },
      data as uPlot.AlignedData,
      this.e.chart,
    );
    let worst = -Infinity;
    let worstF = 0;
    if (base)
      for (let j = 0; j < n; j++)
        if (base[j] > 0 && s.density[j] > 0) {
          const d = powerRatioDb(s.density[j] / base[j]);
          if (d > worst) {
            worst = d;
            worstF = f[j];
          }
        }
    const off = Math.abs(s.offsetSeconds) >= 0.05 ? ` (${s.offsetSeconds.toFixed(1)} s from the time picked)` : '';
    this.e.info.textContent =
      `${s.channel}, kept spectrum at t = ${s.t.toFixed(1)} s, ${s.wallTime}${off}; ${n} log-spaced points, each the largest bin of its cell; ` +
      `segment ${String(s.settings.segment)}, ${String(s.settings.window)}` +
      (base
        ? ` · largest rise over the baseline: ${worst >= 0 ? '+' : ''}${worst.toFixed(1)} dB at ${hz(worstF)}`
        : ' · no baseline to compare with');
    this.e.replay.replaceChildren();
    if (incident?.capture) {
      const a = document.createElement('a');
      a.href = `files/${incident.capture.split('/').map(encodeURIComponent).join('/')}`;
      a.textContent = 'capture file';
      const cmd = document.createElement('code');
      cmd.textContent = `floorline replay ${incident.capture}`;
      this.e.replay.append(`Incident ${incident.id}: `, a, ' · replay it from the data folder with ', cmd);
    } else if (incident) this.e.replay.textContent = `Incident ${incident.id}: no capture was kept for it.`;
  }

  hide(): void {
    this.e.panel.hidden = true;
    this.shown = null;
  }
}
