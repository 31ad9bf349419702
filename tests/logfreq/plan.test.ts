import { describe, expect, it } from 'vitest';
import { planLogFrequencies } from '../../dsp/logfreq/plan.ts';
import { SeededRandom } from '../../dsp/random.ts';
import { LiveLogFrequency } from '../../dsp/logfreq/live-log-frequency.ts';

describe('planLogFrequencies', () => {
  const fs = 10_000;
  const n = 6_000_000;
  const plan = planLogFrequencies({ sampleRate: fs, samples: n, points: 200, averages: 100 });

  it('spaces neighbours one resolution apart, so their estimates barely overlap (Tröbs & Heinzel 2006, from memory)', () => {
    for (let j = 1; j < plan.count; j++) {
      expect(plan.frequency[j] - plan.frequency[j - 1]).toBeCloseTo(plan.resolutionHz[j - 1], 9);
    }
    expect(plan.count).toBeGreaterThan(170);
    expect(plan.count).toBeLessThan(230);
    expect(plan.frequency[plan.count - 1]).toBeLessThanOrEqual(fs / 2);
  });

  it('reaches the desired averages wherever the log spacing allows, and stays clear of DC and inside the record', () => {
    // N = L·(1 + (1 − ξ)(K − 1)) segments of L with overlap ξ (Welch 1967 segmenting, as scipy.signal.welch).
    const lFor100 = n / (1 + 0.5 * 99);
    for (let j = 0; j < plan.count; j++) {
      expect(plan.bin[j]).toBeGreaterThanOrEqual(2 - 1e-9); // Hann's main lobe is ±2 bins (Heinzel 2002)
      expect(plan.segment[j]).toBeLessThanOrEqual(n);
      expect((plan.averages[j] - 1) * plan.step[j] + plan.segment[j]).toBeLessThanOrEqual(n);
      if (plan.segment[j] <= lFor100) expect(plan.averages[j]).toBeGreaterThanOrEqual(100);
    }
    // And the low end trades averages for resolution: fewer than 100 there, at least one.
    expect(plan.averages[0]).toBeLessThan(100);
    expect(plan.averages[0]).toBeGreaterThanOrEqual(1);
  });

  it('refuses a lowest frequency the record cannot resolve, naming the fix', () => {
    expect(() => planLogFrequencies({ sampleRate: 100, samples: 1000, minFrequency: 0.1 })).toThrow(
      /raise minFrequency or use a longer record/,
    );
    expect(() => planLogFrequencies({ sampleRate: 100, samples: 1000, overlap: 1 })).toThrow(
      /overlap must lie in \[0, 1\)/,
    );
  });
});

describe('LiveLogFrequency.reset', () => {
  it('drops open segments at a gap, keeps completed averages and stamps later segments after the gap', () => {
    const fs = 500;
    const live = new LiveLogFrequency({ sampleRate: fs, spanSeconds: 60, points: 30 });
    const x = new SeededRandom(2).fillGaussian(new Float64Array(20 * fs), 1);
    live.push(x);
    const before = live.averagesUsed();
    live.reset(1_000_000);
    expect(live.averagesUsed()).toEqual(before);
    live.push(x);
    expect(live.lastSample).toBe(1_000_000 + x.length - 1);
    expect(live.lastSegmentSample).toBeGreaterThan(1_000_000);
    expect(live.lastSegmentSample).toBeLessThanOrEqual(live.lastSample);
    const after = live.averagesUsed();
    let grew = 0;
    for (let p = 0; p < live.count; p++) {
      expect(after[p]).toBeGreaterThanOrEqual(before[p]);
      if (after[p] > before[p]) grew++;
    }
    expect(grew).toBeGreaterThan(20);
  });
});
