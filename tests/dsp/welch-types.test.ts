// Type-level guard on the Welch options: each misuse below must stay a compile error (tsc -p tsconfig.json fails
// on an unused @ts-expect-error) and is also refused at run time.
import { describe, expect, it } from 'vitest';
import { WelchEstimator } from '../../dsp/welch.ts';

const ok = { sampleRate: 1000, segment: 256, window: 'hann', overlap: 0.5, detrend: 'mean' as const };

describe('WelchEstimator options are typed', () => {
  it('rejects misuse at compile time and at run time', () => {
    // @ts-expect-error scipy's 'constant' is spelled 'mean' here
    expect(() => new WelchEstimator({ ...ok, detrend: 'constant' })).toThrow(/detrend "constant" is unknown/);
    // @ts-expect-error rolling needs a count
    expect(() => new WelchEstimator({ ...ok, averaging: { mode: 'rolling' } })).toThrow(/count/);
    // @ts-expect-error exponential takes tauSeconds, not a count
    expect(() => new WelchEstimator({ ...ok, averaging: { mode: 'exponential', count: 3 } })).toThrow(/tauSeconds/);
    // @ts-expect-error scaling is 'density' or 'spectrum'
    expect(() => new WelchEstimator({ ...ok, scaling: 'psd' })).toThrow(/scaling "psd"/);
    // @ts-expect-error sampleRate is required
    expect(() => new WelchEstimator({ segment: 256, window: 'hann', overlap: 0.5, detrend: 'mean' })).toThrow(
      /sampleRate/,
    );
    const est = new WelchEstimator(ok);
    // @ts-expect-error samples are typed arrays, not plain arrays
    expect(() => est.push([1, 2, 3])).toThrow(/Float64Array or Float32Array/);
  });
});
