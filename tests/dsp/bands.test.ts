// Band RMS: against numpy's sum over the selected bins of a density, and against the RMS of sines inside the band.
import { execFileSync } from 'node:child_process';
import { describe, expect, it } from 'vitest';
import { asd, bandBins, bandRmsInBins } from '../../dsp/bands.ts';

/** The band RMS as the agent computes it: the bins of the band, then sqrt(Σ psd·df) over them. */
function bandRms(psd: Float64Array, df: number, lo: number, hi: number): number {
  const r = bandBins(psd.length, df, lo, hi);
  return bandRmsInBins(psd, df, r.first, r.last);
}
import { WelchEstimator } from '../../dsp/welch.ts';

describe('bandRms', () => {
  it('equals numpy sqrt(sum(psd[(f >= lo) & (f <= hi)]) * df) on a density, edges included', () => {
    // numpy only (no scipy import: the suite stays fast); the density is an arbitrary positive spectrum.
    const script = `
import json, numpy as np
p = np.random.default_rng(3).chisquare(8, 129) * 1e-3
f = np.arange(129) * (1000.0 / 256)
df = f[1] - f[0]
bands = [(0, 500), (3.90625, 7.8125), (20, 200.1), (100, 100), (101, 101.5), (499, 1e6)]
out = [float(np.sqrt(np.sum(p[(f >= lo) & (f <= hi)]) * df)) for lo, hi in bands]
print(json.dumps(dict(p=p.tolist(), df=float(df), bands=bands, rms=out)))
`;
    const ref = JSON.parse(execFileSync('python3', ['-c', script], { encoding: 'utf8' })) as {
      p: number[];
      df: number;
      bands: [number, number][];
      rms: number[];
    };
    const psd = Float64Array.from(ref.p);
    ref.bands.forEach(([lo, hi], i) => {
      const ours = bandRms(psd, ref.df, lo, hi);
      if (ref.rms[i] === 0) expect(ours).toBe(0);
      else expect(Math.abs(ours / ref.rms[i] - 1), `${lo}:${hi}`).toBeLessThan(1e-12);
    });
    // The whole range (0 to Nyquist) is every bin: bins 0..128.
    expect(bandBins(psd.length, ref.df, 0, 500)).toEqual({ first: 0, last: 128 });
  });

  it('equals sqrt(Σ A²/2) of the sines inside the band and ignores those outside (common practice)', () => {
    const fs = 8192;
    const n = 8192;
    const x = new Float64Array(8 * n);
    const tones = [
      [150.3, 0.2],
      [400.7, 0.05],
      [2500.1, 0.5],
    ];
    for (let i = 0; i < x.length; i++) for (const [f, a] of tones) x[i] += a * Math.sin((2 * Math.PI * f * i) / fs);
    const est = new WelchEstimator({ sampleRate: fs, segment: n, window: 'hann', overlap: 0.5, detrend: 'mean' });
    est.push(x);
    const psd = est.psd();
    const expected = Math.sqrt(0.2 ** 2 / 2 + 0.05 ** 2 / 2);
    expect(Math.abs(bandRms(psd, est.binHz, 100, 1000) / expected - 1)).toBeLessThan(1e-3);
  });

  it('refuses a reversed band and returns sqrt of the density as ASD', () => {
    expect(() => bandBins(10, 1, 5, 2)).toThrow(/band 5:2 Hz is invalid/);
    expect(Array.from(asd(Float64Array.of(4, 9, 1e-18)))).toEqual([2, 3, 1e-9]);
  });
});
