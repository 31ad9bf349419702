// Default band rules: decade bands inside the usable range plus the whole usable band. The usable range starts past
// the DC lobe (the window's main-lobe half-width plus one bin: below it detrending and leakage from DC dominate) and
// ends one bin below Nyquist (DC and Nyquist bins carry half the degrees of freedom of the others).
import type { BandSpec } from '../../dsp/detection/band-compare.ts';

export function usableRange(sampleRate: number, segment: number, mainLobeHalfWidth: number): BandSpec {
  const binHz = sampleRate / segment;
  return { low: (Math.ceil(mainLobeHalfWidth) + 1) * binHz, high: sampleRate / 2 - binHz };
}

/** Decade edges 10^n strictly inside the range; an end piece narrower than half a decade joins its neighbour. */
export function defaultBands(sampleRate: number, segment: number, mainLobeHalfWidth: number): BandSpec[] {
  const { low, high } = usableRange(sampleRate, segment, mainLobeHalfWidth);
  const edges = [low];
  for (let e = Math.ceil(Math.log10(low)); 10 ** e < high; e++) if (10 ** e > low) edges.push(10 ** e);
  edges.push(high);
  const halfDecade = Math.sqrt(10);
  if (edges.length > 2 && edges[1] / edges[0] < halfDecade) edges.splice(1, 1);
  if (edges.length > 2 && edges[edges.length - 1] / edges[edges.length - 2] < halfDecade)
    edges.splice(edges.length - 2, 1);
  const bands: BandSpec[] = [];
  for (let i = 0; i + 1 < edges.length; i++) bands.push({ low: edges[i], high: edges[i + 1] });
  if (bands.length > 1) bands.push({ low, high });
  return bands;
}
