// Tone level from a density: the injected sine is the reference (its RMS is A/√2, common practice).
import { describe, expect, it } from 'vitest';
import { SeededRandom } from '../../dsp/random.ts';
import { findTone, toneAt } from '../../dsp/tone.ts';
import { WelchEstimator } from '../../dsp/welch.ts';

function sineDensity(window: string, f0: number, peak: number, noise = 0): WelchEstimator {
  const fs = 1000;
  const n = 1024;
  const x = new Float64Array(16 * n);
  const rng = new SeededRandom(9);
  for (let i = 0; i < x.length; i++) x[i] = peak * Math.sin((2 * Math.PI * f0 * i) / fs + 1.1) + noise * rng.gaussian();
  const est = new WelchEstimator({ sampleRate: fs, segment: n, window, overlap: 0.5, detrend: 'mean' });
  est.push(x);
  return est;
}

describe('tone level from the density summed over the main lobe', () => {
  it('reads a Hann-windowed sine within 0.1 % of A/√2 wherever it falls between bins', () => {
    for (let d = 0; d <= 1.0001; d += 0.1) {
      const f0 = (100 + d) * (1000 / 1024);
      const est = sineDensity('hann', f0, 0.8);
      const t = findTone(est.psd(), est.binHz, est.window.mainLobeHalfWidth, 50, 200);
      expect(Math.abs(t.rms / (0.8 * Math.SQRT1_2) - 1), `offset ${d.toFixed(1)}`).toBeLessThan(1e-3);
      // Power-weighted centroid: within a hundredth of a bin of the true frequency (stated tolerance).
      expect(Math.abs(t.frequency - f0) / est.binHz).toBeLessThan(0.01);
    }
  });

  it('reads the same level with every window, noise underneath adding its in-lobe power only', () => {
    for (const w of ['hamming', 'blackman-harris', 'nuttall', 'kaiser:3', 'hft95', 'hft90d', 'hft116d']) {
      const est = sineDensity(w, 211.37, 0.5, 1e-4);
      const t = findTone(est.psd(), est.binHz, est.window.mainLobeHalfWidth, 150, 300);
      expect(Math.abs(t.rms / (0.5 * Math.SQRT1_2) - 1), w).toBeLessThan(1e-3);
      expect(Math.abs(t.frequency - 211.37) / est.binHz, w).toBeLessThan(0.01);
    }
  });

  it('refuses a peak outside the spectrum and an empty search range', () => {
    const psd = new Float64Array(10);
    expect(() => toneAt(psd, 1, 2, 10)).toThrow(/outside the 10 bins/);
    expect(() => findTone(psd, 1, 2, 3.2, 3.5)).toThrow(/holds no bin/);
  });
});
