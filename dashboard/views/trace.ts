// Time trace of the newest samples of every channel, x in sample time.
import uPlot from 'uplot';
import type { DecodedFrame } from '../../protocol/frame.ts';
import { channelColour } from '../colours.ts';
import { si } from '../format.ts';

export class TraceView {
  private plot: uPlot | null = null;
  private t = new Float64Array(0);
  private ys: Float64Array[] = [];
  private key = '';

  constructor(private readonly el: HTMLElement) {
    new ResizeObserver(() => this.plot?.setSize({ width: this.el.clientWidth, height: 170 })).observe(el);
  }

  update(f: DecodedFrame, names: string[], unit: string): void {
    const key = `${f.channels}|${f.length}|${names.join(',')}`;
    if (key !== this.key) this.build(f, names, unit, key);
    const first = f.sample - f.length + 1;
    for (let i = 0; i < f.length; i++) this.t[i] = (first + i) / f.sampleRate;
    for (let c = 0; c < f.channels; c++) this.ys[c].set(f.values[c]);
    this.plot!.setData([this.t, ...this.ys] as unknown as uPlot.AlignedData, true);
  }

  private build(f: DecodedFrame, names: string[], unit: string, key: string): void {
    this.plot?.destroy();
    this.key = key;
    this.t = new Float64Array(f.length);
    this.ys = Array.from({ length: f.channels }, () => new Float64Array(f.length));
    const series: uPlot.Series[] = [{ label: 't s' }];
    for (let c = 0; c < f.channels; c++)
      series.push({ label: names[c] ?? `ch${c}`, stroke: channelColour(c), width: 1, value: (_u, v) => si(v, unit) });
    this.plot = new uPlot(
      {
        width: Math.max(300, this.el.clientWidth),
        height: 170,
        legend: { show: true, live: false },
        scales: { x: { time: false } },
        axes: [
          { label: 'Sample time, s', stroke: '#5b6670', grid: { stroke: '#e6e1d6' } },
          {
            label: unit,
            size: 70,
            values: (_u, v) => v.map((x) => (x == null ? '' : si(x, '', 2))),
            stroke: '#5b6670',
            grid: { stroke: '#e6e1d6' },
          },
        ],
        series,
      },
      [this.t, ...this.ys] as unknown as uPlot.AlignedData,
      this.el,
    );
  }
}
