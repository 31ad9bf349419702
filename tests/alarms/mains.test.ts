import { describe, expect, it } from 'vitest';
import { MainsClassifier, harmonicOrder } from '../../dsp/detection/mains.ts';

function lines(list: [number, number][]): { f: Float64Array; a: Float64Array; n: number } {
  return { f: Float64Array.from(list, (x) => x[0]), a: Float64Array.from(list, (x) => x[1]), n: list.length };
}

describe('MainsClassifier', () => {
  it('finds a 50 Hz supply running 0.15 Hz fast and classifies its harmonics up to k = 20 at 1 Hz resolution', () => {
    // A grid inside its normal ±0.2 Hz range (EN 50160 allows ±1 % over a year; ±0.2 Hz is typical practice).
    const f0 = 50.15;
    const { f, a, n } = lines([
      [f0, 1e-6],
      [2 * f0, 2e-7],
      [3 * f0, 5e-7],
      [20 * f0 + 0.3, 1e-7],
      [1234.5, 3e-7],
    ]);
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
    const { f, a, n } = lines([
      [59.9, 1e-6],
      [179.7, 4e-7],
      [299.5, 2e-7],
    ]);
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
  // The ranges below: EN 50160 gives 50 Hz ± 1 % for 99.5 % of a year on interconnected systems; ±0.2 Hz is the
  // usual normal range of a synchronous grid (both from memory), used as the accepted range of the fundamental;
  // a line at order k may sit k·0.2 Hz + 0.05 Hz (its frequency estimate's error) from k × nominal.
  it('keeps the nominal it picked: after a 50 Hz line, a strong 119.8 Hz line is a spur and the fundamental stays at 50 Hz', () => {
    const m = new MainsClassifier({ setting: 'auto', binHz: 1.953125 }, 8);
    let l = lines([[50.02, 1e-6]]);
    m.classify(l.f, l.a, l.n);
    expect(m.nominal).toBe(50);
    l = lines([
      [119.8, 1e-2],
      [50.01, 1e-6],
    ]);
    m.classify(l.f, l.a, l.n);
    expect(m.fundamental).toBeCloseTo(50.01, 9);
    expect(Array.from(m.harmonic.subarray(0, l.n))).toEqual([0, 1]);
    l = lines([[119.8, 1e-2]]);
    m.classify(l.f, l.a, l.n);
    expect([m.nominal, m.fundamental, m.measured, m.harmonic[0]]).toEqual([50, 0, false, 0]);
  });

  it('accepts a measured fundamental only within ±0.2 Hz of the nominal', () => {
    const m = new MainsClassifier({ setting: 50, binHz: 1.953125 }, 8);
    let l = lines([[50.3, 1e-6]]);
    m.classify(l.f, l.a, l.n);
    expect(m.fundamental).toBe(0);
    l = lines([[49.85, 1e-6]]);
    m.classify(l.f, l.a, l.n);
    expect(m.fundamental).toBeCloseTo(49.85, 9);
    // Third harmonic at 150.5 Hz: 0.5 Hz ≤ 3·0.2 + 0.05 Hz is in range; 150.7 Hz (0.7 Hz off) is not.
    l = lines([[150.5, 1e-6]]);
    m.classify(l.f, l.a, l.n);
    expect(m.fundamental).toBeCloseTo(150.5 / 3, 9);
    l = lines([[150.7, 1e-6]]);
    m.classify(l.f, l.a, l.n);
    expect(m.fundamental).toBe(0);
  });

  it('does not pick 60 Hz from a line 0.53 Hz off its second harmonic (> 2·0.2 + 0.05 Hz), nor from lines marked as no evidence', () => {
    const m = new MainsClassifier({ setting: 'auto', binHz: 1.953125 }, 8);
    let l = lines([[119.47, 1]]);
    m.classify(l.f, l.a, l.n);
    expect([m.nominal, m.fundamental]).toEqual([0, 0]);
    l = lines([[119.9, 1]]);
    m.classify(l.f, l.a, l.n, Uint8Array.of(0));
    expect([m.nominal, m.fundamental]).toEqual([0, 0]);
    l = lines([[59.9, 1e-6]]);
    m.classify(l.f, l.a, l.n);
    expect(m.nominal).toBe(60);
    expect(m.fundamental).toBeCloseTo(59.9, 9);
  });
});
