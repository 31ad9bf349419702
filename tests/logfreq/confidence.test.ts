import { describe, expect, it } from 'vitest';
import { SeededRandom } from '../../dsp/random.ts';
import { densityIntervalFactors } from '../../dsp/logfreq/confidence.ts';
import { LiveLogFrequency } from '../../dsp/logfreq/live-log-frequency.ts';
import { LogFrequencyFrameBuilder } from '../../dsp/logfreq/live-frame.ts';
import { runPython } from './python.ts';

describe('densityIntervalFactors', () => {
  it('equals ν/χ²_ν quantiles from scipy.stats.chi2.ppf, including non-integer ν', () => {
    const dofs = [2, 3.7, 10, 41.3, 200, 5000];
    const ref = runPython<{ lo: Float64Array; hi: Float64Array }>(
      `
from scipy.stats import chi2
nu = np.array(inp['nu'])
out['lo'] = nu / chi2.ppf(0.975, nu); out['hi'] = nu / chi2.ppf(0.025, nu)
`,
      { nu: dofs },
    );
    // @stdlib's quantile matches scipy to ~1e-15 up to ν ≈ 200 but drifts to 6e-5 at ν = 5000 (measured here):
    // ample for a band drawn on a chart, so the check allows 1e-4 there and 1e-9 below.
    dofs.forEach((nu, i) => {
      const k = densityIntervalFactors(nu, 0.95);
      const tol = nu > 1000 ? 1e-4 : 1e-9;
      expect(Math.abs(k.lower / ref.lo[i] - 1)).toBeLessThan(tol);
      expect(Math.abs(k.upper / ref.hi[i] - 1)).toBeLessThan(tol);
    });
  });

  it('refuses a level outside (0, 1)', () => {
    expect(() => densityIntervalFactors(10, 1)).toThrow(/level must lie in \(0, 1\)/);
  });
});

describe('LogFrequencyFrameBuilder', () => {
  it('gives the ASD of the live estimate with a band that brackets it, stamped with the last sample', () => {
    const fs = 1000;
    const live = new LiveLogFrequency({ sampleRate: fs, spanSeconds: 30, points: 40, firstSample: 1000 });
    live.push(new SeededRandom(6).fillGaussian(new Float64Array(20 * fs), 1));
    const frame = new LogFrequencyFrameBuilder(live).update();
    const psd = live.psd();
    const eq = live.equivalentAverages();
    expect(frame.sample).toBe(1000 + 20 * fs - 1);
    expect(frame.t).toBeCloseTo(frame.sample / fs, 12);
    let finite = 0;
    for (let p = 0; p < live.count; p++) {
      if (!Number.isFinite(psd[p])) {
        expect(frame.asd[p]).toBeNaN();
        continue;
      }
      finite++;
      expect(frame.asd[p]).toBeCloseTo(Math.sqrt(psd[p]), 15);
      const k = densityIntervalFactors(2 * eq[p], 0.95);
      expect(frame.asdLower[p]).toBeCloseTo(Math.sqrt(psd[p] * k.lower), 15);
      expect(frame.asdUpper[p]).toBeCloseTo(Math.sqrt(psd[p] * k.upper), 15);
      expect(frame.asdLower[p]).toBeLessThan(frame.asd[p]);
      expect(frame.asdUpper[p]).toBeGreaterThan(frame.asd[p]);
    }
    expect(finite).toBeGreaterThan(30);
  });
});
