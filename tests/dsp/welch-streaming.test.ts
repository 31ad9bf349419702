// Streaming invariance: the estimate depends on the samples, never on how they were split into blocks.
// Property-based with fast-check; the reference is the same samples pushed in one call.
import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import type { AveragingSpec } from '../../protocol/settings.ts';
import { SeededRandom } from '../../dsp/random.ts';
import { WelchEstimator } from '../../dsp/welch.ts';

const MODES: AveragingSpec[] = [
  { mode: 'mean' },
  { mode: 'rolling', count: 5 },
  { mode: 'exponential', tauSeconds: 0.3 },
  { mode: 'max' },
  { mode: 'median', count: 4 },
];

const x = new SeededRandom(11).fillGaussian(new Float64Array(3000));

function estimator(averaging: AveragingSpec, detrend: 'none' | 'mean' | 'linear', overlap: number): WelchEstimator {
  return new WelchEstimator({ sampleRate: 1000, segment: 128, window: 'hft95', overlap, detrend, averaging });
}

describe('WelchEstimator.push in any block sizes', () => {
  it('gives bit-identical spectra, counts and sample stamps for every averaging mode', () => {
    fc.assert(
      fc.property(
        fc.constantFrom(...MODES),
        fc.constantFrom('none' as const, 'mean' as const, 'linear' as const),
        fc.constantFrom(0, 0.5, 0.75, 0.9),
        fc.array(fc.integer({ min: 0, max: 400 }), { minLength: 1, maxLength: 40 }),
        fc.boolean(),
        (averaging, detrend, overlap, sizes, useRange) => {
          const whole = estimator(averaging, detrend, overlap);
          whole.push(x);
          const split = estimator(averaging, detrend, overlap);
          let at = 0;
          let i = 0;
          while (at < x.length) {
            const n = Math.min(sizes[i++ % sizes.length], x.length - at);
            if (useRange) split.push(x, at, at + n);
            else split.push(x.slice(at, at + n));
            at += n;
            if (n === 0 && sizes.every((s) => s === 0)) break;
          }
          if (at < x.length) split.push(x, at);
          expect(split.segmentsTotal).toBe(whole.segmentsTotal);
          expect(split.segmentsUsed).toBe(whole.segmentsUsed);
          expect(split.lastSegmentSample).toBe(whole.lastSegmentSample);
          expect(split.equivalentAverages()).toBe(whole.equivalentAverages());
          const a = whole.psd();
          const b = split.psd();
          for (let k = 0; k < a.length; k++) if (!Object.is(a[k], b[k])) expect(b[k]).toBe(a[k]);
        },
      ),
      { numRuns: 150, seed: 20260412 },
    );
  });

  it('treats Float32Array input as the same values in float64', () => {
    const x32 = Float32Array.from(x);
    const a = estimator({ mode: 'mean' }, 'mean', 0.5);
    a.push(x32);
    const b = estimator({ mode: 'mean' }, 'mean', 0.5);
    b.push(Float64Array.from(x32));
    expect(Array.from(a.psd())).toEqual(Array.from(b.psd()));
  });
});
