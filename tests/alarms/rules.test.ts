import { describe, expect, it } from 'vitest';
import { defaultBands } from '../../agent/rules/default-bands.ts';
import { parseBand } from '../../protocol/bands.ts';
import { defaultRules, parseRules, timingInSamples } from '../../agent/rules/rules.ts';

describe('rules configuration', () => {
  it('merges a config over the defaults and turns seconds into samples', () => {
    const r = parseRules(
      { band: { marginDb: 2, onDelay: 1.5, bands: ['20:2000'] }, mains: { frequency: 60 } },
      'x.json',
    );
    expect(r.band.marginDb).toBe(2);
    expect(r.band.bands).toEqual([{ low: 20, high: 2000 }]);
    expect(r.band.alpha).toBe(defaultRules().band.alpha);
    expect(r.mains.frequency).toBe(60);
    expect(timingInSamples(r.band, 20000)).toEqual({ onDelay: 30000, offDelay: 40000, deadband: 1, reAlarm: 0 });
  });

  it('refuses unknown keys and bad values, naming the field', () => {
    expect(() => parseRules({ bnd: {} }, 'x.json')).toThrow(/unknown key "bnd"/);
    expect(() => parseRules({ band: { alpha: 0.7 } }, 'x.json')).toThrow(
      /band\.alpha must be a number from 1e-15 to 0\.1/,
    );
    expect(() => parseRules({ band: { bands: ['2000:20'] } }, 'x.json')).toThrow(/band\.bands.*LO must be below HI/);
    expect(() => parseRules({ mains: { frequency: 55 } }, 'x.json')).toThrow(
      /mains\.frequency must be "auto", 50 or 60/,
    );
  });

  it('--band takes LO:HI in Hz and refuses anything else with the fix', () => {
    expect(parseBand('20:2000')).toEqual({ low: 20, high: 2000 });
    expect(parseBand(' 0.1 : 10 ')).toEqual({ low: 0.1, high: 10 });
    expect(() => parseBand('20-2000')).toThrow(/e\.g\. --band 20:2000/);
  });

  it('default bands are the decades inside the usable range plus the whole of it', () => {
    // 20 kS/s, 4096-point Hann: usable from (2 + 1) bins = 14.6 Hz to one bin below Nyquist = 9995.1 Hz.
    const b = defaultBands(20000, 4096, 2).map((x) => [Number(x.low.toFixed(2)), Number(x.high.toFixed(2))]);
    expect(b).toEqual([
      [14.65, 100],
      [100, 1000],
      [1000, 9995.12],
      [14.65, 9995.12],
    ]);
    // 4 kS/s, 1024: 11.7 Hz to 1996 Hz; the 1000–1996 Hz piece is under half a decade and joins 100–1000.
    expect(defaultBands(4000, 1024, 2).map((x) => Math.round(x.high))).toEqual([100, 1996, 1996]);
  });
});
