import { describe, expect, it } from 'vitest';
import { SeededRandom } from '../../dsp/random.ts';
import { PeakToPeakMeter, type PeakToPeakReading } from '../../dsp/flicker/peak-to-peak.ts';
import { runPython } from '../logfreq/python.ts';

/** Pushes x in blocks of `block` samples. */
function feed(meter: PeakToPeakMeter, x: Float64Array, block: number): void {
  for (let at = 0; at < x.length; at += block) meter.push(x, at, Math.min(x.length, at + block));
}

describe('PeakToPeakMeter', () => {
  it('reports max − min, RMS and 6.6σ per window equal to numpy on scipy.signal.sosfilt output', () => {
    const fs = 1000;
    const x = new SeededRandom(8).fillGaussian(new Float64Array(62_000), 1e-6);
    for (let i = 0; i < x.length; i++) x[i] += 3e-6 * Math.sin((2 * Math.PI * 0.02 * i) / fs); // slow wander the high-pass removes
    const readings: PeakToPeakReading[] = [];
    const meter = new PeakToPeakMeter({
      sampleRate: fs,
      firstSample: 5000,
      initialState: 'zero',
      onWindow: (r) => readings.push({ ...r }),
    });
    feed(meter, x, 777);
    // Reference: numpy np.ptp / RMS / np.std over the same windows of scipy.signal.sosfilt with
    // butter(2, 0.1, 'highpass') and butter(4, 10, 'lowpass') (scipy.signal.butter, fs = 1000).
    const ref = runPython<{ ptp: Float64Array; rms: Float64Array; std: Float64Array; start: Float64Array }>(
      `
from scipy.signal import butter, sosfilt
fs = inp['fs']
sos = np.vstack([butter(2, 0.1, 'highpass', fs=fs, output='sos'), butter(4, 10, 'lowpass', fs=fs, output='sos')])
y = sosfilt(sos, inp['x'])
skip = int(inp['skip']); W = int(inp['W'])
k = (len(y) - skip) // W
segs = y[skip:skip + k * W].reshape(k, W)
out['ptp'] = np.ptp(segs, axis=1); out['rms'] = np.sqrt(np.mean(segs ** 2, axis=1)); out['std'] = np.std(segs, axis=1)
out['start'] = inp['first'] + skip + np.arange(k) * W
`,
      { x, fs, skip: meter.settleSamples, W: meter.windowSamples, first: 5000 },
    );
    expect(readings.length).toBe(ref.ptp.length);
    expect(readings.length).toBe(4); // (62 s − 15.5 s settling) / 10 s
    for (let k = 0; k < readings.length; k++) {
      const r = readings[k];
      expect(r.startSample).toBe(ref.start[k]);
      expect(r.sample).toBe(ref.start[k] + meter.windowSamples - 1);
      expect(r.t).toBeCloseTo(r.sample / fs, 12);
      expect(Math.abs(r.peakToPeak - ref.ptp[k]) / ref.ptp[k]).toBeLessThan(1e-9);
      expect(Math.abs(r.rms - ref.rms[k]) / ref.rms[k]).toBeLessThan(1e-9);
      expect(Math.abs(r.sigma - ref.std[k]) / ref.std[k]).toBeLessThan(1e-9);
      expect(r.gaussianPeakToPeak).toBeCloseTo(6.6 * ref.std[k], 15);
    }
  });

  it('reads a 1 Hz sine as 2A·|H(1 Hz)| peak-to-peak and A·|H|/√2 RMS, |H| from scipy.signal.sosfreqz', () => {
    const fs = 2000;
    const amp = 5e-6;
    const x = new Float64Array(40 * fs);
    for (let i = 0; i < x.length; i++) x[i] = 0.25 + amp * Math.sin((2 * Math.PI * 1 * i) / fs); // with a DC offset
    const readings: PeakToPeakReading[] = [];
    const meter = new PeakToPeakMeter({ sampleRate: fs, onWindow: (r) => readings.push({ ...r }) });
    meter.push(x);
    const ref = runPython<{ h: number }>(
      `
from scipy.signal import butter, sosfreqz
fs = inp['fs']
sos = np.vstack([butter(2, 0.1, 'highpass', fs=fs, output='sos'), butter(4, 10, 'lowpass', fs=fs, output='sos')])
out['h'] = float(np.abs(sosfreqz(sos, worN=[1.0], fs=fs)[1][0]))
`,
      { fs },
    );
    expect(readings.length).toBe(2);
    const r = readings[readings.length - 1];
    // Whole cycles in the window: max − min of a sampled sine is 2A within 1 − cos(π/2000) (sampling of the crest).
    expect(Math.abs(r.peakToPeak / (2 * amp * ref.h) - 1)).toBeLessThan(1e-4);
    expect(Math.abs(r.rms / ((amp * ref.h) / Math.SQRT2) - 1)).toBeLessThan(1e-4);
    expect(r.gaussianPeakToPeak).toBeCloseTo(6.6 * r.sigma, 15);
  });

  it('gives the same readings whatever the block sizes', () => {
    const x = new SeededRandom(1).fillGaussian(new Float64Array(50_000), 1);
    const run = (block: number): number[] => {
      const out: number[] = [];
      const m = new PeakToPeakMeter({
        sampleRate: 500,
        windowSeconds: 5,
        onWindow: (r) => out.push(r.peakToPeak, r.rms, r.sample),
      });
      feed(m, x, block);
      return out;
    };
    const whole = run(x.length);
    expect(whole.length).toBeGreaterThan(0);
    expect(run(1)).toEqual(whole);
    expect(run(333)).toEqual(whole);
  });

  it('refuses a sample rate too low for the 10 Hz low-pass, naming the fix', () => {
    expect(() => new PeakToPeakMeter({ sampleRate: 20 })).toThrow(/sample rate above 20 Hz/);
  });
});
