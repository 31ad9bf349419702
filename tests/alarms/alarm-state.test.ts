import { describe, expect, it } from 'vitest';
import { AlarmState, AlarmTransition } from '../../dsp/detection/alarm-state.ts';
import { SeededRandom } from '../../dsp/random.ts';

const T = 3; // threshold, dB

function run(state: AlarmState, levels: number[], step = 100): { sample: number; t: AlarmTransition }[] {
  const out: { sample: number; t: AlarmTransition }[] = [];
  levels.forEach((v, i) => {
    const t = state.update(i * step, v, T);
    if (t !== AlarmTransition.None) out.push({ sample: i * step, t });
  });
  return out;
}

describe('AlarmState', () => {
  it('a fault flickering around its threshold gives one raise and one clear, not chatter', () => {
    // A level wandering ±1 dB (seeded Gaussian, σ = 0.5 dB) around the threshold for 2000 evaluations, then quiet.
    // Deadband 2 dB and on/off delays are the standard cure for chatter (common practice, ISA-18.2 alarm management).
    const rng = new SeededRandom(7);
    const levels: number[] = [];
    for (let i = 0; i < 200; i++) levels.push(0 + 0.5 * rng.gaussian());
    for (let i = 0; i < 2000; i++) levels.push(T + 0.2 + 0.5 * rng.gaussian());
    for (let i = 0; i < 200; i++) levels.push(0 + 0.5 * rng.gaussian());
    const events = run(new AlarmState({ onDelay: 300, offDelay: 1000, deadband: 2, reAlarm: 0 }), levels);
    expect(events.map((e) => e.t)).toEqual([AlarmTransition.Raised, AlarmTransition.Cleared]);
    // Without hysteresis the same signal chatters: this is what the deadband prevents.
    const bare = run(new AlarmState({ onDelay: 0, offDelay: 0, deadband: 0, reAlarm: 0 }), levels);
    expect(bare.length).toBeGreaterThan(100);
  });

  it('raises after exactly the on-delay and clears after exactly the off-delay', () => {
    const s = new AlarmState({ onDelay: 500, offDelay: 300, deadband: 1, reAlarm: 0 });
    const levels = [0, 0, 5, 5, 5, 5, 5, 5, 5, 1.5, 1.5, 1.5, 1.5, 1.5, 1.5];
    // Level crosses at sample 200; 500 samples later is 700. Drops below 3 − 1 at 900; 300 later is 1200.
    expect(run(s, levels)).toEqual([
      { sample: 700, t: AlarmTransition.Raised },
      { sample: 1200, t: AlarmTransition.Cleared },
    ]);
  });

  it('a level inside the deadband keeps an active alarm raised', () => {
    const s = new AlarmState({ onDelay: 0, offDelay: 0, deadband: 2, reAlarm: 0 });
    expect(run(s, [4, 2.5, 1.5, 1.1, 0.9])).toEqual([
      { sample: 0, t: AlarmTransition.Raised },
      { sample: 400, t: AlarmTransition.Cleared },
    ]);
  });

  it('repeats an unacknowledged alarm every re-alarm interval and stops once acknowledged', () => {
    const s = new AlarmState({ onDelay: 0, offDelay: 0, deadband: 0, reAlarm: 1000 });
    const events: { sample: number; t: AlarmTransition }[] = [];
    for (let i = 0; i <= 40; i++) {
      if (i === 25) s.acknowledge();
      const t = s.update(i * 100, 10, T);
      if (t !== AlarmTransition.None) events.push({ sample: i * 100, t });
    }
    expect(events).toEqual([
      { sample: 0, t: AlarmTransition.Raised },
      { sample: 1000, t: AlarmTransition.Repeated },
      { sample: 2000, t: AlarmTransition.Repeated },
    ]);
  });

  it('a shelved alarm is silent, and is announced when the shelf ends if still active', () => {
    const s = new AlarmState({ onDelay: 0, offDelay: 0, deadband: 0, reAlarm: 0 });
    s.shelve(1000);
    const events = run(s, [10, 10, 10, 0, 10, 10, 10, 10, 10, 10, 10, 10]);
    expect(events).toEqual([{ sample: 1000, t: AlarmTransition.Raised }]);
  });

  it('refuses fractional delays and negative deadbands', () => {
    expect(() => new AlarmState({ onDelay: 1.5, offDelay: 0, deadband: 0, reAlarm: 0 })).toThrow(/onDelay/);
    expect(() => new AlarmState({ onDelay: 0, offDelay: 0, deadband: -1, reAlarm: 0 })).toThrow(/deadband/);
  });

  it('clears on the recent level while the long one still decays, and re-raises only when the recent level is back over the threshold', () => {
    // A fault ends at evaluation 50: the recent (short-window) level drops at once, the long average decays by
    // 0.2 dB per evaluation. Hysteresis on the recent level (deadband, delays; common practice, ISA-18.2) must
    // still hold: no re-raise while the long level is high, a re-raise when the fault comes back.
    const s = new AlarmState({ onDelay: 0, offDelay: 200, deadband: 1, reAlarm: 0 });
    const out: [number, AlarmTransition][] = [];
    for (let i = 0; i < 200; i++) {
      const on = i < 50 || i >= 150;
      const long = on && i < 50 ? 10 : i < 150 ? Math.max(0, 10 - 0.2 * (i - 50)) : 10;
      const recent = on ? 10 : 0;
      const t = s.update(i * 100, long, T, recent);
      if (t !== AlarmTransition.None) out.push([i, t]);
    }
    // Cleared offDelay after the recent level fell (evaluation 52), not when the long one reached T − 1 (evaluation 90);
    // raised again when the fault returned at 150.
    expect(out).toEqual([
      [0, AlarmTransition.Raised],
      [52, AlarmTransition.Cleared],
      [150, AlarmTransition.Raised],
    ]);
  });

  it('after a clear on the recent level, a recent level inside the deadband does not re-raise', () => {
    const s = new AlarmState({ onDelay: 0, offDelay: 0, deadband: 1, reAlarm: 0 });
    expect(s.update(0, 10, T, 10)).toBe(AlarmTransition.Raised);
    expect(s.update(100, 10, T, 1)).toBe(AlarmTransition.Cleared);
    // Recent back to 2.5 dB (between T − deadband and T) while the long average is still at 8 dB: no chatter.
    expect(s.update(200, 8, T, 2.5)).toBe(AlarmTransition.None);
    expect(s.update(300, 8, T, 3.5)).toBe(AlarmTransition.Raised);
  });
});
