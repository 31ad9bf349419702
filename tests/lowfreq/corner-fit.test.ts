import { describe, expect, it } from 'vitest';
import { digamma, trigamma } from '../../dsp/special/polygamma.ts';
import { fitCorner } from '../../dsp/flicker/corner-fit.ts';
import { planLogFrequencies } from '../../dsp/logfreq/plan.ts';
import { logFrequencyPsd } from '../../dsp/logfreq/log-frequency-psd.ts';
import { runPython } from '../logfreq/python.ts';

describe('digamma and trigamma', () => {
  it('agree with scipy.special.digamma and scipy.special.polygamma(1, x)', () => {
    const xs = Array.from({ length: 60 }, (_, i) => 0.05 * Math.pow(10, (i * 5.3) / 59));
    const ref = runPython<{ d: Float64Array; t: Float64Array }>(
      `
from scipy.special import digamma, polygamma
x = np.array(inp['x'])
out['d'] = digamma(x); out['t'] = polygamma(1, x)
`,
      { x: xs },
    );
    xs.forEach((x, i) => {
      expect(Math.abs(digamma(x) - ref.d[i])).toBeLessThan(5e-13 * Math.max(1, Math.abs(ref.d[i])));
      expect(Math.abs(trigamma(x) - ref.t[i])).toBeLessThan(5e-13 * ref.t[i]);
    });
  });
});

describe('fitCorner', () => {
  it('gives the parameters and uncertainties of scipy.optimize.curve_fit on the same log-space points', () => {
    // Points drawn as S·χ²_ν/ν with numpy (default_rng(5)), model e_w²(1 + (f_c/f)^α); the reference fits the
    // same bias-corrected log values with sigma = sqrt(polygamma(1, ν/2)), absolute_sigma=True.
    const pts = runPython<{ f: Float64Array; s: Float64Array; nu: Float64Array }>(
      `
rng = np.random.default_rng(5)
f = np.logspace(-2, 2, 90)
nu = np.round(np.clip(2 * 40 * (f / 1.0), 4, 400))
S = 4e-16 * (1 + (0.7 / f) ** 1.2)
out['f'] = f; out['nu'] = nu; out['s'] = S * rng.chisquare(nu) / nu
`,
    );
    const fixed = fitCorner({ frequency: pts.f, psd: pts.s, dof: pts.nu });
    const free = fitCorner({ frequency: pts.f, psd: pts.s, dof: pts.nu }, { exponent: 'free' });
    const ref = runPython<{ p2: Float64Array; e2: Float64Array; p3: Float64Array; e3: Float64Array }>(
      `
from scipy.optimize import curve_fit
from scipy.special import digamma, polygamma
f, s, nu = inp['f'], inp['s'], inp['nu']
y = np.log(s) - (digamma(nu / 2) - np.log(nu / 2))
sig = np.sqrt(polygamma(1, nu / 2))
lnf = np.log(f)
m3 = lambda x, a, b, al: a + np.logaddexp(0, al * (b - x))
m2 = lambda x, a, b: m3(x, a, b, 1.0)
p2, c2 = curve_fit(m2, lnf, y, p0=[np.log(4e-16), 0.0], sigma=sig, absolute_sigma=True, xtol=1e-14, ftol=1e-14)
p3, c3 = curve_fit(m3, lnf, y, p0=[np.log(4e-16), 0.0, 1.0], sigma=sig, absolute_sigma=True, xtol=1e-14, ftol=1e-14)
out['p2'] = p2; out['e2'] = np.sqrt(np.diag(c2)); out['p3'] = p3; out['e3'] = np.sqrt(np.diag(c3))
`,
      { f: pts.f, s: pts.s, nu: pts.nu },
    );
    expect(fixed.converged && free.converged).toBe(true);
    const rel = (a: number, b: number) => Math.abs(a - b) / Math.abs(b);
    // The minimum is flat: two optimisers stop at slightly different points of it depending on the machine's
    // floating-point and BLAS paths, so a parameter-to-parameter tolerance of 1e-7 is tighter than the problem's
    // conditioning. What is defined: each parameter lies within 1e-3 of its own standard error (curve_fit's
    // covariance) of the reference, and the χ² objective, evaluated by numpy at both optima, agrees to 1e-9.
    const ours2 = [Math.log(fixed.whitePsd), Math.log(fixed.corner)];
    const ours3 = [Math.log(free.whitePsd), Math.log(free.corner), free.exponent];
    ours2.forEach((p, i) => expect(Math.abs(p - ref.p2[i])).toBeLessThan(1e-3 * ref.e2[i]));
    ours3.forEach((p, i) => expect(Math.abs(p - ref.p3[i])).toBeLessThan(1e-3 * ref.e3[i]));
    // Started elsewhere (as the live view starts a clipping round from the round before), it reaches the same
    // minimum: within the same 1e-3 standard errors of curve_fit's.
    const started = fitCorner(
      { frequency: pts.f, psd: pts.s, dof: pts.nu },
      { exponent: 'free', start: { a: ref.p3[0] + 0.5, b: ref.p3[1] - 0.8, alpha: 1.6 } },
    );
    expect(started.converged).toBe(true);
    [Math.log(started.whitePsd), Math.log(started.corner), started.exponent].forEach((p, i) =>
      expect(Math.abs(p - ref.p3[i])).toBeLessThan(1e-3 * ref.e3[i]),
    );
    const chi = runPython<{ ours2: number; ref2: number; ours3: number; ref3: number }>(
      `
from scipy.special import digamma, polygamma
f, s, nu = inp['f'], inp['s'], inp['nu']
y = np.log(s) - (digamma(nu / 2) - np.log(nu / 2))
sig = np.sqrt(polygamma(1, nu / 2))
lnf = np.log(f)
m3 = lambda x, a, b, al: a + np.logaddexp(0, al * (b - x))
chi2 = lambda p: float(np.sum(((y - m3(lnf, p[0], p[1], p[2] if len(p) > 2 else 1.0)) / sig) ** 2))
out['ours2'] = chi2(inp['o2']); out['ref2'] = chi2(inp['r2']); out['ours3'] = chi2(inp['o3']); out['ref3'] = chi2(inp['r3'])
`,
      { f: pts.f, s: pts.s, nu: pts.nu, o2: ours2, r2: Array.from(ref.p2), o3: ours3, r3: Array.from(ref.p3) },
    );
    expect(rel(chi.ours2, chi.ref2)).toBeLessThan(1e-9);
    expect(rel(chi.ours3, chi.ref3)).toBeLessThan(1e-9);
    // Uncertainties: ours are in e_w and f_c, curve_fit's in ln e_w² and ln f_c (σ_ew = e_w·σ_a/2, σ_fc = f_c·σ_b).
    expect(rel((2 * fixed.whiteAsdSigma) / fixed.whiteAsd, ref.e2[0])).toBeLessThan(1e-5);
    expect(rel(fixed.cornerSigma / fixed.corner, ref.e2[1])).toBeLessThan(1e-5);
    expect(rel((2 * free.whiteAsdSigma) / free.whiteAsd, ref.e3[0])).toBeLessThan(1e-5);
    expect(rel(free.cornerSigma / free.corner, ref.e3[1])).toBeLessThan(1e-5);
    expect(rel(free.exponentSigma, ref.e3[2])).toBeLessThan(1e-5);
  });

  it('recovers the white density, corner and exponent of generated 1/f^α + white noise within 3σ', () => {
    const fs = 100;
    const n = 1 << 20;
    const sigma = 1;
    const cases = [
      { fc: 1.0, alpha: 1.0, seed: 31 },
      { fc: 0.3, alpha: 0.8, seed: 32 },
    ];
    // FFT shaping of seeded Gaussian noise with numpy: one-sided density 2σ²/fs·(1 + (fc/f)^α).
    const gen = runPython<{ x: Float64Array[] }>(
      `
n = int(inp['n']); fs = inp['fs']; out['x'] = []
f = np.fft.rfftfreq(n, 1 / fs)
for c in inp['cases']:
    rng = np.random.default_rng(int(c['seed']))
    X = np.fft.rfft(rng.standard_normal(n) * inp['sigma'])
    shape = np.zeros_like(f); shape[1:] = np.sqrt(1 + (c['fc'] / f[1:]) ** c['alpha'])
    out['x'].append(np.fft.irfft(X * shape, n))
`,
      { n, fs, sigma, cases },
    );
    const plan = planLogFrequencies({ sampleRate: fs, samples: n, minFrequency: 0.002, points: 150, averages: 40 });
    const ew = Math.sqrt((2 * sigma * sigma) / fs);
    cases.forEach((c, i) => {
      const est = logFrequencyPsd(gen.x[i], plan);
      const input = { frequency: est.frequency, psd: est.psd, dof: Array.from(est.equivalentAverages, (k) => 2 * k) };
      const fit = fitCorner(input, { maxFrequency: 20, exponent: 'free' });
      expect(fit.converged).toBe(true);
      expect(Math.abs(fit.whiteAsd - ew)).toBeLessThan(3 * fit.whiteAsdSigma);
      expect(Math.abs(fit.corner - c.fc)).toBeLessThan(3 * fit.cornerSigma);
      expect(Math.abs(fit.exponent - c.alpha)).toBeLessThan(3 * fit.exponentSigma);
      // The model describes the data: reduced χ² near 1 (±0.5 is ~3σ for ~130 points, sqrt(2/130) ≈ 0.12).
      expect(Math.abs(fit.reducedChiSquare - 1)).toBeLessThan(0.5);
      // A fit with the true exponent fixed recovers the corner too.
      const fixed = fitCorner(input, { maxFrequency: 20, exponent: c.alpha });
      expect(Math.abs(fixed.corner - c.fc)).toBeLessThan(3 * fixed.cornerSigma);
      expect(fixed.cornerSigma).toBeLessThan(fit.cornerSigma);
    });
  });

  it('refuses a fit range with too few points, naming the fix', () => {
    expect(() => fitCorner({ frequency: [1, 2, 3], psd: [1, 1, 1], dof: [10, 10, 10] })).toThrow(/widen the fit range/);
  });
});
