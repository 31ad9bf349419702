import { describe, expect, it } from 'vitest';
import { SeededRandom } from '../../dsp/random.ts';
import { LiveLogFrequency, DECIMATOR_CUTOFF, DECIMATOR_ORDER } from '../../dsp/logfreq/live-log-frequency.ts';
import { planFromPoints } from '../../dsp/logfreq/plan.ts';
import { logFrequencyPsd } from '../../dsp/logfreq/log-frequency-psd.ts';
import { runPython } from './python.ts';

describe('LiveLogFrequency', () => {
  it('equals the offline estimate of each stage signal made with scipy.signal.butter + sosfilt + [1::2], droop divided out', () => {
    const fs = 2000;
    const n = 60 * fs; // shorter than the span, so every point averages all of its segments
    const x = new SeededRandom(21).fillGaussian(new Float64Array(n), 1);
    for (let i = 0; i < n; i++) x[i] += 0.4 * Math.sin(i * 0.0005) + 0.1; // slow wander and offset for the mean removal
    const live = new LiveLogFrequency({ sampleRate: fs, spanSeconds: 200, points: 70, averages: 10 });
    for (let at = 0, b = 5; at < n; at += b, b = ((b * 13 + 7) % 3001) + 1) live.push(x, at, Math.min(n, at + b));
    expect(live.stages).toBeGreaterThan(5);
    // Reference stage signals: stage k+1 = sosfilt(butter(10, 0.2·R_k, fs=R_k), stage k)[1::2] (scipy.signal),
    // from x − x[0]: the live form takes its first sample out as a constant (mean removal cancels it), so its
    // decimators start on that signal.
    const ref = runPython<{ stages: Float64Array[] }>(
      `
from scipy.signal import butter, sosfilt
sos = butter(int(inp['order']), inp['cut'] * 2, output='sos')  # cutoff as a fraction of Nyquist
y = inp['x'] - inp['x'][0]; st = [inp['x']]
for k in range(1, int(inp['stages'])):
    y = sosfilt(sos, y)[1::2]; st.append(y)
out['stages'] = st
`,
      { x, order: DECIMATOR_ORDER, cut: DECIMATOR_CUTOFF, stages: live.stages },
    );
    const got = live.psd();
    let checked = 0;
    for (let p = 0; p < live.count; p++) {
      const k = live.stage[p];
      const y = ref.stages[k];
      const rate = fs / 2 ** k;
      if (live.segment[p] > y.length) {
        // Not one segment of this point fits in the record yet: reported as no estimate.
        expect(live.averagesUsed()[p]).toBe(0);
        expect(got[p]).toBeNaN();
        continue;
      }
      const plan = planFromPoints(
        { sampleRate: rate, samples: y.length, window: live.window, overlap: live.overlap },
        [live.frequency[p]],
        [live.segment[p]],
      );
      const off = logFrequencyPsd(y, plan);
      const expected = off.psd[0] * live.droop[p];
      expect(live.averagesUsed()[p]).toBe(plan.averages[0]);
      expect(Math.abs(got[p] - expected) / expected).toBeLessThan(1e-8);
      expect(live.rbwHz[p]).toBeCloseTo((1.5 * rate) / live.segment[p], 10); // Hann ENBW 1.5 bins (Heinzel 2002)
      checked++;
    }
    expect(checked).toBeGreaterThan(live.count - 10);
    expect(live.lastSample).toBe(n - 1);
  });

  it('finds white noise at 2σ²/fs within the chi-square bounds of its reported averages, across all stages', () => {
    const fs = 1000;
    const sigma = 0.5;
    const live = new LiveLogFrequency({ sampleRate: fs, spanSeconds: 60, points: 90, averages: 20 });
    const x = new SeededRandom(99).fillGaussian(new Float64Array(150 * fs), sigma);
    live.push(x);
    const psd = live.psd();
    const nu = Array.from(live.equivalentAverages(), (k) => 2 * k);
    // ν·Ŝ/S ~ χ²_ν, ν = 2·K_eq (Welch 1967); quantiles from scipy.stats.chi2.ppf.
    const q = runPython<{ lo: Float64Array; hi: Float64Array }>(
      `
from scipy.stats import chi2
nu = np.array(inp['nu'])
out['lo'] = chi2.ppf(0.005, nu) / nu; out['hi'] = chi2.ppf(0.995, nu) / nu
`,
      { nu },
    );
    const truth = (2 * sigma * sigma) / fs; // common practice
    let outside = 0;
    let w = 0;
    let sum = 0;
    for (let p = 0; p < live.count; p++) {
      const r = psd[p] / truth;
      if (r < q.lo[p] || r > q.hi[p]) outside++;
      sum += nu[p] * r;
      w += nu[p];
    }
    expect(live.count).toBeGreaterThan(60);
    expect(outside).toBeLessThanOrEqual(4); // binom.sf(4, 90, 0.01) ≈ 0.002 (scipy.stats.binom)
    expect(Math.abs(sum / w - 1)).toBeLessThan(4 * Math.sqrt(2 / w));
  });

  it('keeps a full-scale tone near Nyquist out of the decimated low-frequency points (no aliasing)', () => {
    const fs = 1000;
    const sigma = 1e-4;
    const live = new LiveLogFrequency({ sampleRate: fs, spanSeconds: 40, points: 60, averages: 10 });
    const x = new SeededRandom(55).fillGaussian(new Float64Array(60 * fs), sigma);
    // 1 V at 450 Hz, 80 dB above the noise: its alias after one halving would sit at 50 Hz.
    for (let i = 0; i < x.length; i++) x[i] += Math.SQRT2 * Math.sin((2 * Math.PI * 450 * i) / fs);
    live.push(x);
    const psd = live.psd();
    const nu = live.equivalentAverages();
    const truth = (2 * sigma * sigma) / fs; // white floor (common practice)
    let sum = 0;
    let w = 0;
    let worst = 0;
    for (let p = 0; p < live.count; p++) {
      if (live.stage[p] === 0 || !(nu[p] > 0)) continue; // stage 0 holds the tone itself
      const r = psd[p] / truth;
      worst = Math.max(worst, r);
      sum += 2 * nu[p] * r;
      w += 2 * nu[p];
    }
    expect(w).toBeGreaterThan(0);
    // Pooled ratio within 4σ (variance 2/Σν) and no point above 20 (P(χ²₂/2 > 20) = e^-20 for the rawest point).
    expect(Math.abs(sum / w - 1)).toBeLessThan(4 * Math.sqrt(2 / w));
    expect(worst).toBeLessThan(20);
  });

  it('forgets what lies more than about one span back: after a level change it shows only the new level', () => {
    const fs = 500;
    const live = new LiveLogFrequency({ sampleRate: fs, spanSeconds: 20, points: 50, averages: 8 });
    const rng = new SeededRandom(12);
    live.push(rng.fillGaussian(new Float64Array(40 * fs), 1));
    live.push(rng.fillGaussian(new Float64Array(30 * fs), 3));
    const psd = live.psd();
    const nu = Array.from(live.equivalentAverages(), (k) => 2 * k);
    const truth = (2 * 9) / fs; // white noise of σ = 3 (common practice: 2σ²/fs)
    let sum = 0;
    let w = 0;
    for (let p = 0; p < live.count; p++) {
      // One old segment left in a mean of ν/2 would pull it down by ≥ 8/9 of 1/(ν/2); none may look mixed.
      expect(psd[p] / truth).toBeGreaterThan(0.2);
      sum += nu[p] * (psd[p] / truth);
      w += nu[p];
    }
    expect(Math.abs(sum / w - 1)).toBeLessThan(4 * Math.sqrt(2 / w)); // pooled mean, variance 2/Σν
    // The means hold roughly one span: about the number of segments a 20 s record fits (within a batch).
    const used = live.averagesUsed();
    for (let p = 0; p < live.count; p++) {
      const span = ((used[p] - 1) * live.step[p] + live.segment[p]) * 2 ** live.stage[p];
      expect(span / fs).toBeLessThan(30);
    }
  });

  it('gives bit-identical spectra whatever the block sizes', () => {
    const x = new SeededRandom(4).fillGaussian(new Float64Array(40_000), 1);
    const run = (block: number): number[] => {
      const l = new LiveLogFrequency({ sampleRate: 500, spanSeconds: 30, points: 40, chunk: 1000 });
      for (let at = 0; at < x.length; at += block) l.push(x, at, Math.min(x.length, at + block));
      return [...l.psd(), l.lastSegmentSample];
    };
    const whole = run(x.length);
    expect(run(1)).toEqual(whole);
    expect(run(777)).toEqual(whole);
  });
});
