// An alarm's peak is one moment: its level and its amplitude come from the same evaluation (common practice for a
// test record: a peak reading quotes what the instrument showed at that instant, not the largest of each figure
// taken at different times). The case below is the demo's: an overload lifts a line's amplitude and its local
// floor together, so the amplitude is largest where the level over the floor is not.
import { describe, expect, it } from 'vitest';
import { AlarmLife } from '../../dsp/detection/alarm-life.ts';

describe('AlarmLife peak', () => {
  it('keeps the amplitude of the peak-level instant, not the largest amplitude seen', () => {
    const life = new AlarmLife();
    life.raised(100);
    life.track(100, 20, 10e-6); // raised, still rising
    life.track(200, 30, 48e-6); // settled line: 48 µV, 30 dB over the floor
    life.track(300, 12, 19e-3); // overload: 19 mV "line" on a floor lifted 1000-fold
    life.track(400, 29, 46e-6);
    expect(life.peakLevel).toBe(30);
    expect(life.peakSample).toBe(200);
    expect(life.peakAmplitude).toBe(48e-6);
  });

  it('starts a fresh peak at each raise', () => {
    const life = new AlarmLife();
    life.raised(0);
    life.track(10, 40, 1e-3);
    life.cleared();
    life.raised(1000);
    life.track(1010, 15, 2e-6);
    expect([life.peakLevel, life.peakAmplitude, life.peakSample]).toEqual([15, 2e-6, 1010]);
  });
});
