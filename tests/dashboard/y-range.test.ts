// The spectrum's log y range ends on whole decades. A range starting just under a decade (9.95e-10, from a baseline
// the long-watch test captured during the demo's clip: shorted floor 9.95e-9 V/√Hz ÷ 10) sent uPlot 1.6's log
// splits into an endless loop; a decade minimum makes them step 1, 2, … 9 × 10^k as uPlot's own log ranges do.
import { describe, expect, it } from 'vitest';
import { decadeRange, fixedDensityRange, paddedRange } from '../../dashboard/views/y-range.ts';

const isDecade = (v: number): boolean => Number.isInteger(Math.log10(v)) && v === Number(`1e${Math.log10(v)}`);

describe('log y ranges', () => {
  it('widen to whole decades: at least one below the lowest reference and two above the highest', () => {
    const [lo, hi] = fixedDensityRange([[9.947683356222284e-9, 0.06797167645654675]], [NaN], true)!;
    expect(lo).toBe(1e-10);
    expect(hi).toBe(10);
    expect(isDecade(lo) && isDecade(hi)).toBe(true);
    const [a, b] = paddedRange([[3.3e-7, 2.1e-6]], true);
    expect([a, b]).toEqual([1e-8, 1e-3]);
  });

  it('dB ranges are unchanged: 10 dB below, 30 above', () => {
    expect(fixedDensityRange([[-130, -100]], [NaN], false)).toEqual([-140, -70]);
  });

  it('a decade range always spans at least one decade and is exact (10 ** -24 is not 1e-24)', () => {
    expect(decadeRange(1e-5, 1e-5)).toEqual([1e-5, 1e-4]);
    expect(decadeRange(2e-24, 3e-24)).toEqual([1e-24, 1e-23]);
    expect(decadeRange(0.5e-6, 4e-3)).toEqual([1e-7, 1e-2]);
  });
});
