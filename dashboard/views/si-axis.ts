// The y axis the small charts share: a unit label and ticks with SI prefixes ("200 µ", "1.0 n").
import type uPlot from 'uplot';
import { si } from '../format.ts';

export function siAxis(unit: string): uPlot.Axis {
  return {
    label: unit,
    size: 70,
    values: (_u, vals) => vals.map((v) => (v == null ? '' : si(v, '', 2))),
    stroke: '#5b6670',
    grid: { stroke: '#e6e1d6' },
  };
}
