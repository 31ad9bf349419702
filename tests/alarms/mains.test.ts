import { describe, expect, it } from 'vitest';
import { MainsClassifier, harmonicOrder } from '../../dsp/alarms/mains.ts';

function lines(list: [number, number][]): { f: Float64Array; a: Float64Array; n: number } {
  return { f: Float64Array.from(list, (x) => x[0]), a: Float64Array.from(list, (x) => x[1]), n: list.length };
}

describe('MainsClassifier', () => {
  it('finds a 50 Hz supply running 0.15 Hz fast and classifies its harmonics up to k = 20 at 1 Hz resolution', () => {
    // A grid inside its normal ±0.2 Hz range (EN 50160 allows ±1 % over a year; ±0.2 Hz is typical practice).
    const f0 = 50.15;
    const { f, a, n } = lines([[f0, 1e-6], [2 * f0, 2e-7], [3 * f0, 5e-7], [20 * f0 + 0.3, 1e-7], [1234.5, 3e-7]]);
    const m = new MainsClassifier({ setting: 'auto', binHz: 0.9765625 }, 8);
    m.classify(f, a, n);
    expect(m.fundamental).toBeCloseTo(f0, 9);
    expect(Array.from(m.harmonic.subarray(0, n))).toEqual([1, 2, 3, 20, 0]);
    // Totals are root-sum-squares of the classified lines (RMS of uncorrelated lines adds in power, common practice).
    expect(m.total).toBeCloseTo(Math.hypot(1e-6, 2e-7, 5e-7, 1e-7), 15);
    expect(m.odd).toBeCloseTo(Math.hypot(1e-6, 5e-7), 15);
    expect(m.even).toBeCloseTo(Math.hypot(2e-7, 1e-7), 15);
  });

  it('tells a 60 Hz grid from a 50 Hz one', () => {
    const { f, a, n } = lines([[59.9, 1e-6], [179.7, 4e-7], [299.5, 2e-7]]);
    const m = new MainsClassifier({ setting: 'auto', binHz: 1 }, 8);
    m.classify(f, a, n);
    expect(m.fundamental).toBeCloseTo(59.9, 9);
    expect(Array.from(m.harmonic.subarray(0, n))).toEqual([1, 3, 5]);
  });

  it('does not call a lone line near a high multiple of 50 Hz mains', () => {
    const { f, a, n } = lines([[700.3, 1e-6]]);
    const m = new MainsClassifier({ setting: 'auto', binHz: 3.9 }, 8);
    m.classify(f, a, n);
    expect(m.fundamental).toBe(0);
    expect(m.harmonic[0]).toBe(0);
  });

  it('widens the tolerance with the harmonic order', () => {
    // |f − k·f0| ≤ Δf/2 + k·δ: 0.9 Hz off is harmonic 10 with δ = 0.1 and Δf = 0 but not harmonic 2.
    expect(harmonicOrder(500.9, 50, 0, 0.1, 40)).toBe(10);
    expect(harmonicOrder(100.9, 50, 0, 0.1, 40)).toBe(0);
  });
});
