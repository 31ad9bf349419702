import { describe, expect, it } from 'vitest';
import { SeededRandom } from '../../dsp/random.ts';
import { butterworthSos, cascadeSos, settleSamples, sosPowerResponse } from '../../dsp/filters/butterworth.ts';
import { SosCascade } from '../../dsp/filters/sos-filter.ts';
import { runPython, type PyValue } from '../logfreq/python.ts';

const designs = [
  { kind: 'highpass', order: 2, fc: 0.1, fs: 10_000 },
  { kind: 'lowpass', order: 4, fc: 10, fs: 10_000 },
  { kind: 'lowpass', order: 10, fc: 2000, fs: 10_000 },
  { kind: 'highpass', order: 6, fc: 3, fs: 250 },
  { kind: 'lowpass', order: 2, fc: 11_000, fs: 48_000 },
] as const;

describe('butterworthSos', () => {
  it('gives the coefficients and response of scipy.signal.butter(N, fc, btype, fs=fs, output="sos")', () => {
    const ours = designs.map((d) => butterworthSos(d.kind, d.order, d.fc, d.fs));
    const freqs = designs.map((d) =>
      Array.from({ length: 40 }, (_, i) => (d.fs / 2) * Math.pow(10, -5 + (5 * i) / 40)),
    );
    const ref = runPython<{ sos: Float64Array[]; h2: Float64Array[] }>(
      `
from scipy.signal import butter, sosfreqz
out['sos'] = []; out['h2'] = []
for d, f in zip(inp['designs'], inp['freqs']):
    sos = butter(int(d['order']), d['fc'], btype=d['kind'], fs=d['fs'], output='sos')
    _, h = sosfreqz(sos, worN=np.array(f), fs=d['fs'])
    out['sos'].append(sos.ravel()); out['h2'].append(np.abs(h) ** 2)
`,
      { designs: designs as unknown as PyValue, freqs },
    );
    for (let i = 0; i < designs.length; i++) {
      const a = ours[i].sos;
      const b = ref.sos[i];
      expect(a.length).toBe(b.length);
      for (let k = 0; k < a.length; k++)
        expect(Math.abs(a[k] - b[k])).toBeLessThanOrEqual(1e-9 * Math.abs(b[k]) + 1e-13);
      for (let k = 0; k < freqs[i].length; k++) {
        const h2 = sosPowerResponse(ours[i], freqs[i][k], designs[i].fs);
        // sosfreqz evaluates the polynomials directly, losing digits near DC for poles close to z = 1.
        expect(Math.abs(h2 - ref.h2[i][k])).toBeLessThanOrEqual(1e-6 * ref.h2[i][k] + 1e-300);
      }
    }
  });

  it('matches the closed-form magnitude 1/(1 + (tan(ω/2)/tan(ωc/2))^±2N) of a bilinear Butterworth, −3 dB at fc', () => {
    // Closed form of a prewarped bilinear Butterworth (Oppenheim & Schafer, bilinear transform; common practice).
    for (const d of designs) {
      const f = butterworthSos(d.kind, d.order, d.fc, d.fs);
      const tc = Math.tan((Math.PI * d.fc) / d.fs);
      for (let i = 1; i < 50; i++) {
        const fr = (d.fs / 2) * Math.pow(10, -6 + (6 * i) / 50);
        const ratio = Math.tan((Math.PI * fr) / d.fs) / tc;
        const expected = 1 / (1 + Math.pow(d.kind === 'lowpass' ? ratio : 1 / ratio, 2 * d.order));
        // The coefficients are rounded to doubles; for poles near z = 1 the response moves by up to
        // eps/(1 + a1 + a2) ≈ 2.5e-8 relative for the 0.1 Hz pair (a design error shows as percent).
        expect(Math.abs(sosPowerResponse(f, fr, d.fs) - expected)).toBeLessThanOrEqual(5e-8 * expected + 1e-12);
      }
      expect(sosPowerResponse(f, d.fc, d.fs)).toBeCloseTo(0.5, 10);
    }
  });

  it('refuses odd orders and cutoffs at or beyond Nyquist, naming the limit', () => {
    expect(() => butterworthSos('lowpass', 3, 10, 1000)).toThrow(/even integer/);
    expect(() => butterworthSos('lowpass', 4, 500, 1000)).toThrow(/Nyquist \(500 Hz\)/);
  });
});

describe('SosCascade', () => {
  it('filters like scipy.signal.sosfilt from zero state, in any block sizes', () => {
    const fs = 10_000;
    const filter = cascadeSos(butterworthSos('highpass', 2, 0.1, fs), butterworthSos('lowpass', 4, 10, fs));
    const x = new SeededRandom(3).fillGaussian(new Float64Array(30_000), 1);
    for (let i = 0; i < x.length; i++) x[i] += 2.5; // a DC offset
    const ours = new Float64Array(x.length);
    const a = new SosCascade(filter);
    // Uneven block sizes: the state carries across calls.
    for (let at = 0, b = 1; at < x.length; at += b, b = ((b * 7 + 3) % 997) + 1)
      a.process(x, ours, at, Math.min(x.length, at + b));
    const ref = runPython<{ y: Float64Array }>(
      `
from scipy.signal import sosfilt
out['y'] = sosfilt(inp['sos'].reshape(-1, 6), inp['x'])
`,
      { sos: filter.sos, x },
    );
    // Same recursion as scipy's compiled sosfilt, so equal to rounding.
    for (let i = 0; i < x.length; i++)
      expect(Math.abs(ours[i] - ref.y[i])).toBeLessThanOrEqual(1e-12 * (1 + Math.abs(ref.y[i])));
  });

  it('settleTo(x0) is the steady state of a held input, as scipy.signal.sosfilt_zi(sos)·x0', () => {
    const fs = 10_000;
    const filter = cascadeSos(butterworthSos('highpass', 2, 0.1, fs), butterworthSos('lowpass', 4, 10, fs));
    const c = new SosCascade(filter);
    const x0 = 2.5;
    c.settleTo(x0);
    const zi = c.copyState(new Float64Array(2 * filter.sections));
    const ref = runPython<{ zi: Float64Array; held: Float64Array }>(
      `
from scipy.signal import sosfilt, sosfilt_zi
sos = inp['sos'].reshape(-1, 6)
out['zi'] = (sosfilt_zi(sos) * inp['x0']).ravel()
# A constant input started from our state must stay exactly where it is (the high-pass output is 0).
out['held'] = sosfilt(sos, np.full(20000, inp['x0']), zi=inp['zi'].reshape(-1, 2))[0]
`,
      { sos: filter.sos, x0, zi },
    );
    // scipy solves a linear system per section (lfilter_zi), conditioned like 1/(1 + a1 + a2) ≈ 2e8 for the
    // 0.1 Hz pair, so its zi carries errors of ~2e8·eps ≈ 5e-8 relative; ours holds the output at exactly 0.
    for (let k = 0; k < zi.length; k++) expect(Math.abs(zi[k] - ref.zi[k])).toBeLessThan(2e-7 * x0);
    for (let i = 0; i < ref.held.length; i++) expect(Math.abs(ref.held[i])).toBeLessThan(1e-12 * x0);
  });

  it('settleSamples bounds the impulse response tail that scipy.signal.sosfilt computes', () => {
    const fs = 1000;
    const filter = cascadeSos(butterworthSos('highpass', 2, 0.1, fs), butterworthSos('lowpass', 4, 10, fs));
    const n = settleSamples(filter, 1e-3);
    // 2nd-order Butterworth high-pass at 0.1 Hz: slowest decay rate 2π·0.1/√2 s⁻¹ → ln(1000)/0.444 ≈ 15.5 s (common practice).
    expect(n / fs).toBeGreaterThan(15);
    expect(n / fs).toBeLessThan(16.5);
    const ref = runPython<{ tail: number; peak: number }>(
      `
from scipy.signal import sosfilt
imp = np.zeros(int(inp['len'])); imp[0] = 1
h = sosfilt(inp['sos'].reshape(-1, 6), imp)
out['peak'] = float(np.max(np.abs(h))); out['tail'] = float(np.max(np.abs(h[int(inp['n']):])))
`,
      { sos: filter.sos, n, len: 3 * n },
    );
    expect(ref.tail).toBeLessThan(1e-3 * ref.peak * 5); // envelope bound up to the pair's constant factor
    expect(ref.tail).toBeGreaterThan(0);
  });
});
