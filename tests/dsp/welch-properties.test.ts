// Properties of the Welch estimator that follow from theory: Parseval, a bin-centred sine, white noise,
// flat-top amplitude accuracy, the statistics of overlapped averages, and streaming bookkeeping.
import { describe, expect, it } from 'vitest';
import { SeededRandom } from '../../dsp/random.ts';
import { WelchEstimator } from '../../dsp/welch.ts';
import { WINDOW_NAMES } from '../../dsp/windows.ts';

const ALL_WINDOWS = WINDOW_NAMES.map((n) => (n === 'kaiser:ALPHA' ? 'kaiser:3' : n));

function gaussian(seed: number, n: number, sigma = 1): Float64Array {
  return new SeededRandom(seed).fillGaussian(new Float64Array(n), sigma);
}

describe('WelchEstimator obeys Parseval and the sine-wave calibration', () => {
  it('sums a rectangular-window density to the mean square of the segment (Parseval, common practice)', () => {
    const x = gaussian(1, 256);
    const est = new WelchEstimator({ sampleRate: 1000, segment: 256, window: 'rect', overlap: 0, detrend: 'none' });
    est.push(x);
    const psd = est.psd();
    let s = 0;
    for (const v of psd) s += v * est.binHz;
    let ms = 0;
    for (const v of x) ms += v * v;
    expect(s / (ms / 256) - 1).toBeCloseTo(0, 12);
  });

  it('sums any window density to the window-weighted mean square Σ(xw)²/Σw² (Parseval, common practice)', () => {
    const x = gaussian(2, 512);
    for (const name of ALL_WINDOWS) {
      const est = new WelchEstimator({ sampleRate: 3e3, segment: 512, window: name, overlap: 0, detrend: 'none' });
      est.push(x);
      const w = est.window.values;
      let num = 0;
      let den = 0;
      for (let i = 0; i < 512; i++) {
        num += (x[i] * w[i]) ** 2;
        den += w[i] * w[i];
      }
      let s = 0;
      for (const v of est.psd()) s += v * est.binHz;
      expect(s / (num / den) - 1, name).toBeCloseTo(0, 12);
    }
  });

  it('reads a bin-centred sine of peak A as A²/2 under spectrum scaling with every window (common practice)', () => {
    const n = 4096;
    const k0 = 1024;
    const a = 0.75;
    const x = new Float64Array(n);
    for (let i = 0; i < n; i++) x[i] = a * Math.sin((2 * Math.PI * k0 * i) / n + 0.4);
    for (const name of ALL_WINDOWS) {
      const est = new WelchEstimator({
        sampleRate: 8192,
        segment: n,
        window: name,
        overlap: 0,
        detrend: 'mean',
        scaling: 'spectrum',
      });
      est.push(x);
      const spec = est.psd();
      // Cosine sums have exact zeros at the negative-frequency image (2·k0 bins away); Kaiser leaks a little.
      const tol = name.startsWith('kaiser') ? 1e-7 : 1e-10;
      expect(Math.abs(spec[k0] / ((a * a) / 2) - 1), name).toBeLessThan(tol);
    }
  });

  it('reads an off-bin sine with hft95 within 0.01 dB anywhere between bins (Heinzel 2002: emax 0.0044 dB)', () => {
    const n = 1024;
    const fs = 1024;
    const a = 1.3;
    for (let d = 0; d <= 1.0001; d += 0.05) {
      const f0 = 200 + d;
      const x = new Float64Array(4 * n);
      for (let i = 0; i < x.length; i++) x[i] = a * Math.cos((2 * Math.PI * f0 * i) / fs);
      const est = new WelchEstimator({
        sampleRate: fs,
        segment: n,
        window: 'hft95',
        overlap: 0.756,
        detrend: 'mean',
        scaling: 'spectrum',
      });
      est.push(x);
      const spec = est.psd();
      let peak = 0;
      for (const v of spec) peak = Math.max(peak, v);
      expect(Math.abs(10 * Math.log10(peak / ((a * a) / 2))), `offset ${d.toFixed(2)} bin`).toBeLessThan(0.01);
    }
  });
});

describe('WelchEstimator on white Gaussian noise', () => {
  const fs = 1000;
  const sigma = 0.5;
  const n = 1024;
  const x = gaussian(42, 400_000, sigma);
  const est = new WelchEstimator({ sampleRate: fs, segment: n, window: 'hann', overlap: 0.5, detrend: 'none' });
  est.push(x);
  const psd = est.psd();
  const keq = est.equivalentAverages();

  it('gives the one-sided density 2σ²/fs within four standard errors of the bin average', () => {
    // Per bin the estimate has relative standard deviation 1/sqrt(K_eq) (χ² with 2·K_eq degrees of freedom,
    // Welch 1967); Hann makes adjacent bins correlate (ρ₁ = 4/9, ρ₂ = 1/36), so B bins hold ≈ B/1.94
    // independent values.
    let mean = 0;
    const b = n / 2 - 1;
    for (let k = 1; k <= b; k++) mean += psd[k];
    mean /= b;
    const expected = (2 * sigma * sigma) / fs;
    const stdErr = Math.sqrt(1.94 / (keq * b));
    expect(Math.abs(mean / expected - 1)).toBeLessThan(4 * stdErr);
  });

  it('does not double DC or Nyquist: both read σ²/fs (scipy.signal.welch convention; a real bin is χ²₁)', () => {
    const expected = (sigma * sigma) / fs;
    const stdErr = Math.sqrt(2 / keq);
    expect(Math.abs(psd[0] / expected - 1)).toBeLessThan(4 * stdErr);
    expect(Math.abs(psd[n / 2] / expected - 1)).toBeLessThan(4 * stdErr);
  });
});

describe('equivalentAverages follows Welch (1967)', () => {
  it('is K / (1 + 2(1 − 1/K)/36) for Hann at 50 % (overlap correlation 1/6, Heinzel 2002 sec. 10)', () => {
    const est = new WelchEstimator({ sampleRate: 100, segment: 256, window: 'hann', overlap: 0.5, detrend: 'none' });
    est.push(gaussian(3, 256 + 128 * 9));
    const k = 10;
    expect(est.segmentsUsed).toBe(k);
    expect(est.equivalentAverages()).toBeCloseTo(k / (1 + (2 * (1 - 1 / k)) / 36), 10);
  });

  it('is (2 − α)/α for a long exponential average without overlap (variance of an EMA, common practice)', () => {
    const fs = 1000;
    const segment = 128;
    const tau = 1.2;
    const est = new WelchEstimator({
      sampleRate: fs,
      segment,
      window: 'hann',
      overlap: 0,
      detrend: 'none',
      averaging: { mode: 'exponential', tauSeconds: tau },
    });
    est.push(gaussian(4, segment * 2000));
    const alpha = 1 - Math.exp(-segment / fs / tau);
    expect(est.equivalentAverages() / ((2 - alpha) / alpha) - 1).toBeCloseTo(0, 8);
  });

  // Monte Carlo: the spread of many independent estimates, pooled over bins, has relative variance 1/K_eq.
  function simulatedEquivalent(make: () => WelchEstimator, samples: number, records: number): [number, number] {
    let sum = 0;
    let sumSq = 0;
    let count = 0;
    let predicted = 0;
    const rng = new SeededRandom(77);
    const x = new Float64Array(samples);
    for (let r = 0; r < records; r++) {
      rng.fillGaussian(x);
      const est = make();
      est.push(x);
      predicted = est.equivalentAverages();
      const psd = est.psd();
      const truth = 2 / est.sampleRate;
      for (let k = 2; k < est.bins - 2; k++) {
        const v = psd[k] / truth;
        sum += v;
        sumSq += v * v;
        count++;
      }
    }
    const m = sum / count;
    const variance = sumSq / count - m * m;
    return [(m * m) / variance, predicted];
  }

  it('matches the simulated variance of a 16-segment Hann average at 75 % overlap (K_eq ≈ 8.6, not 16)', () => {
    const [sim, predicted] = simulatedEquivalent(
      () => new WelchEstimator({ sampleRate: 256, segment: 256, window: 'hann', overlap: 0.75, detrend: 'none' }),
      256 + 64 * 15,
      400,
    );
    expect(predicted).toBeGreaterThan(8);
    expect(predicted).toBeLessThan(9);
    expect(Math.abs(sim / predicted - 1)).toBeLessThan(0.1);
  });

  it('matches the simulated variance of an exponential average at 50 % overlap', () => {
    const [sim, predicted] = simulatedEquivalent(
      () =>
        new WelchEstimator({
          sampleRate: 256,
          segment: 256,
          window: 'hann',
          overlap: 0.5,
          detrend: 'none',
          averaging: { mode: 'exponential', tauSeconds: 2 },
        }),
      256 + 128 * 59,
      200,
    );
    expect(Math.abs(sim / predicted - 1)).toBeLessThan(0.1);
  });
});

describe('WelchEstimator bookkeeping in sample time', () => {
  it('stamps the last sample of the newest segment from firstSample, as scipy segments start at sample 0', () => {
    const est = new WelchEstimator({
      sampleRate: 100,
      segment: 64,
      window: 'hann',
      overlap: 0.5,
      detrend: 'mean',
      firstSample: 1000,
    });
    expect(est.lastSegmentSample).toBe(-1);
    expect(est.push(new Float64Array(63))).toBe(0);
    expect(est.push(new Float64Array(1 + 32 * 4 + 5))).toBe(5);
    // Segment j covers [first + 32j, first + 32j + 63]: the fifth ends at 1000 + 128 + 63.
    expect(est.lastSegmentSample).toBe(1000 + 128 + 63);
    expect(est.segmentsTotal).toBe(5);
  });

  it('reset drops a partial segment at a gap and continues from the given index; clear drops the averages', () => {
    const est = new WelchEstimator({ sampleRate: 100, segment: 64, window: 'hann', overlap: 0, detrend: 'none' });
    est.push(gaussian(5, 64 + 40));
    expect(est.segmentsUsed).toBe(1);
    est.reset(5000);
    expect(est.push(gaussian(6, 64))).toBe(1);
    expect(est.lastSegmentSample).toBe(5063);
    expect(est.segmentsUsed).toBe(2);
    est.clear();
    expect(est.segmentsUsed).toBe(0);
    expect(est.lastSegmentSample).toBe(-1);
    expect(Number.isNaN(est.psd()[3])).toBe(true);
    expect(est.equivalentAverages()).toBe(0);
  });

  it('refuses bad settings with a message naming the setting and the allowed range', () => {
    const ok = { sampleRate: 100, segment: 64, window: 'hann', overlap: 0.5, detrend: 'mean' as const };
    expect(() => new WelchEstimator({ ...ok, segment: 100 })).toThrow(/segment must be a power of two from 64/);
    expect(() => new WelchEstimator({ ...ok, segment: 32 })).toThrow(/segment/);
    expect(() => new WelchEstimator({ ...ok, segment: 1 << 21 })).toThrow(/2\^20/);
    expect(() => new WelchEstimator({ ...ok, overlap: 1 })).toThrow(/overlap must be a fraction in \[0, 1\)/);
    expect(() => new WelchEstimator({ ...ok, sampleRate: 0 })).toThrow(/sampleRate/);
    expect(() => new WelchEstimator({ ...ok, window: 'triangle' })).toThrow(/unknown window "triangle"/);
    expect(() => new WelchEstimator({ ...ok, averaging: { mode: 'rolling', count: 0 } })).toThrow(
      /count must be an integer/,
    );
    expect(() => new WelchEstimator({ ...ok, averaging: { mode: 'exponential', tauSeconds: -1 } })).toThrow(
      /tauSeconds/,
    );
    const est = new WelchEstimator(ok);
    expect(() => est.push(new Float64Array(10), 5, 20)).toThrow(/outside the 10 samples/);
    expect(() => est.psd(new Float64Array(3))).toThrow(/needs 33/);
  });
});
