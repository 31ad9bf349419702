// Live coherence trace: γ² per bin of each channel pair (0..1) on the spectrum's log-frequency axis, with the
// coherent rule's threshold for the pair as a dashed line. Shown on request: the page draws what the agent sends
// about once per second of sample time.
import uPlot from 'uplot';
import type { CoherenceTraceMessage } from '../../protocol/coherence-messages.ts';
import type { CoherencePairStatus } from '../../protocol/messages.ts';
import { channelColour, withAlpha } from '../colours.ts';

export class CoherenceView {
  private plot: uPlot | null = null;
  private key = '';
  private thresholds = new Map<string, number>();
  /** The newest trace received (tests and the CSV read it). */
  latest: CoherenceTraceMessage | null = null;
  shown = false;

  constructor(
    private readonly el: HTMLElement,
    private readonly info: HTMLElement,
  ) {
    new ResizeObserver(() => this.plot?.setSize({ width: Math.max(300, this.el.clientWidth), height: 170 })).observe(
      el,
    );
  }

  /** The rule's threshold per pair, from status (max of its floor and the chance bound of the averages). */
  setThresholds(pairs: readonly CoherencePairStatus[] | undefined): void {
    this.thresholds = new Map((pairs ?? []).map((p) => [`${p.a}|${p.b}`, p.threshold]));
  }

  show(on: boolean): void {
    this.shown = on;
    this.el.closest('section')?.toggleAttribute('hidden', !on);
    if (on && this.latest) this.draw(this.latest);
  }

  update(m: CoherenceTraceMessage): void {
    this.latest = m;
    if (this.shown) this.draw(m);
  }

  private draw(m: CoherenceTraceMessage): void {
    const bins = m.pairs[0]?.coherence.length ?? 0;
    if (bins < 2) {
      this.info.textContent = 'no channel pair is cross-analysed on this stream';
      return;
    }
    // From bin 1: bin 0 (DC) has no place on a log axis.
    const x = Array.from({ length: bins - 1 }, (_, k) => (k + 1) * m.binHz);
    const data: (number | null)[][] = [x];
    for (const p of m.pairs) {
      data.push(p.coherence.slice(1));
      const th = this.thresholds.get(`${p.a}|${p.b}`);
      data.push(x.map(() => th ?? null));
    }
    const key = `${bins}|${m.binHz}|${m.pairs.map((p) => `${p.a}|${p.b}`).join(',')}`;
    if (key !== this.key || !this.plot) this.build(m, data, key);
    else this.plot.setData(data as uPlot.AlignedData, false);
    this.info.textContent =
      `γ² at t = ${m.t.toFixed(1)} s (sample time), ` +
      m.pairs.map((p) => `${p.a}–${p.b} from ${p.equivalentAverages.toFixed(1)} equivalent averages`).join('; ') +
      '; dashed: the coherent rule’s threshold';
  }

  private build(m: CoherenceTraceMessage, data: (number | null)[][], key: string): void {
    this.plot?.destroy();
    this.key = key;
    const series: uPlot.Series[] = [{ label: 'Hz' }];
    m.pairs.forEach((p, i) => {
      const col = channelColour(i);
      series.push({
        label: `γ² ${p.a}–${p.b}`,
        stroke: col,
        width: 1,
        value: (_u, v) => (v == null ? '—' : v.toFixed(3)),
      });
      series.push({ label: 'threshold', stroke: withAlpha(col, 0.6), dash: [6, 4], width: 1 });
    });
    this.plot = new uPlot(
      {
        width: Math.max(300, this.el.clientWidth),
        height: 170,
        legend: { show: true, live: true },
        // x from the first bin to Nyquist, as the spectrum's axis runs.
        scales: { x: { time: false, distr: 3, log: 10, range: (_u, lo, hi) => [lo, hi] }, y: { range: [0, 1] } },
        axes: [
          { label: 'Frequency, Hz', stroke: '#5b6670', grid: { stroke: '#e6e1d6' } },
          { label: 'γ²', size: 50, stroke: '#5b6670', grid: { stroke: '#e6e1d6' } },
        ],
        series,
      },
      data as uPlot.AlignedData,
      this.el,
    );
  }
}
