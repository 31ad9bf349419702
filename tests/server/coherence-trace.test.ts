// The coherence trace message: only for snapshots that carry pair coherence, at most one per second of sample time,
// values kept to 6 significant digits (toPrecision, ECMAScript Number.prototype.toPrecision).
import { describe, expect, it } from 'vitest';
import { coherenceTrace } from '../../agent/server/coherence-trace.ts';
import type { ServerSnapshot } from '../../agent/server/backend.ts';

const snap = (sample: number, coherence?: ServerSnapshot['coherence']): ServerSnapshot => ({
  sample,
  t: sample / 1000,
  settings: { sampleRate: 1000, segment: 8, window: 'hann', overlap: 0.5, detrend: 'mean' },
  averaging: { mode: 'mean' },
  binHz: 125,
  nenbw: 1.5,
  enbwHz: 187.5,
  channels: [],
  ...(coherence ? { coherence } : {}),
});
const pair = { a: 'x', b: 'y', coherence: Float64Array.from([0.1234567891, 1, 0, NaN, 0.5]), equivalentAverages: 7.25 };

describe('coherenceTrace', () => {
  it('is absent without pair coherence', () => {
    expect(coherenceTrace(snap(5000), -Infinity)).toBeNull();
    expect(coherenceTrace(snap(5000, []), -Infinity)).toBeNull();
  });
  it('is sent once per second of sample time, with 6 significant digits and non-finite values as 0', () => {
    const m = coherenceTrace(snap(5000, [pair]), -Infinity)!;
    expect(m).toEqual({
      type: 'coherence',
      sample: 5000,
      t: 5,
      binHz: 125,
      pairs: [{ a: 'x', b: 'y', equivalentAverages: 7.25, coherence: [0.123457, 1, 0, 0, 0.5] }],
    });
    expect(coherenceTrace(snap(5999, [pair]), 5000)).toBeNull();
    expect(coherenceTrace(snap(6000, [pair]), 5000)?.sample).toBe(6000);
  });
});
