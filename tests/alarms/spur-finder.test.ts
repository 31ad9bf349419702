import { beforeAll, describe, expect, it } from 'vitest';
import { RunningMedian } from '../../dsp/detection/running-median.ts';
import { SpurFinder } from '../../dsp/detection/spur-finder.ts';
import { SeededRandom } from '../../dsp/random.ts';
import { scipyBatch } from './scipy-reference.ts';

const fs = 8000;
const segment = 1024;
const medianWidths = [1, 4, 16];
const tones = [
  [1234.5, 1e-3],
  [2000.0, 3e-4],
  [517.3, 1e-2],
] as const;
const rng = new SeededRandom(11);
const x = new Float64Array(301);
for (let i = 0; i < x.length; i++) x[i] = Math.exp(rng.gaussian());
// Many ties: values rounded to a coarse grid, so the sorted window must remove the right copies.
const ties = Float64Array.from(x, (v) => Math.round(v * 2) / 2);
type Psd = { f: number[]; psd: number[] };
let medians: { y: number[] }[];
let tonePsds: Psd[];
let noisePsd: Psd;

beforeAll(() => {
  // Source: numpy.median over truncated windows; scipy.signal.welch(hann, nperseg=1024, 50 % overlap) of
  // numpy-generated sines in white noise (numpy default_rng seeds 3 and 4).
  const calls: [string, unknown][] = [
    ...medianWidths.map((h): [string, unknown] => ['median', { x: Array.from(x), h }]),
    ['median', { x: Array.from(ties), h: 4 }],
    ...tones.map(([freq, rms]): [string, unknown] => [
      'tone-psd',
      { fs, n: fs * 8, segment, freq, rms, noise: 1e-5, seed: 3, window: 'hann' },
    ]),
    ['tone-psd', { fs, n: fs * 8, segment, freq: 1000, rms: 0, noise: 1e-5, seed: 4, window: 'hann' }],
  ];
  const r = scipyBatch(calls);
  medians = r.slice(0, 4) as { y: number[] }[];
  tonePsds = r.slice(4, 7) as Psd[];
  noisePsd = r[7] as Psd;
}, 60_000);

describe('RunningMedian', () => {
  it('equals numpy.median over the same truncated windows, odd and even edge lengths alike', () => {
    for (const [i, h] of medianWidths.entries()) {
      // Source: numpy.median(x[max(0, k−h):k+h+1]) for each k.
      const ref = medians[i];
      const out = new RunningMedian(x.length, h).apply(x, new Float64Array(x.length));
      ref.y.forEach((v, k) => expect(out[k]).toBeCloseTo(v, 14));
    }
    const tied = new RunningMedian(ties.length, 4).apply(ties, new Float64Array(ties.length));
    expect(Array.from(tied)).toEqual(medians[3].y);
  });
});

describe('SpurFinder', () => {
  // Hann main-lobe half-width is 2 bins (Heinzel et al. 2002, Table: Hann, first zero at ±2 bins).
  const hannLobe = 2;

  for (const [i, [freq, rms]] of tones.entries()) {
    it(`reads a ${rms} V rms line at ${freq} Hz from a scipy.signal.welch density to 1 % and 1/20 bin`, () => {
      // Source: scipy.signal.welch density of a sine plus white noise of σ = 10 µV (see beforeAll).
      const ref = tonePsds[i];
      const f = Float64Array.from(ref.f);
      const psd = Float64Array.from(ref.psd);
      const finder = new SpurFinder({ frequencies: f, binHz: fs / segment, mainLobeHalfWidth: hannLobe });
      const n = finder.find(psd, 10);
      expect(n).toBe(1);
      expect(Math.abs(finder.lineAmplitude[0] / rms - 1)).toBeLessThan(0.01);
      expect(Math.abs(finder.lineFrequency[0] - freq)).toBeLessThan(fs / segment / 20);
      // Height above floor: the line's peak density over the white floor 2σ²/fs (one-sided density of white
      // noise, common practice) — at least the finder's ratio.
      expect(finder.lineHeightDb[0]).toBeGreaterThan(10);
    });
  }

  it('finds nothing in white noise at a 10 dB margin and keeps only the strongest when over capacity', () => {
    const ref = noisePsd;
    const f = Float64Array.from(ref.f);
    const psd = Float64Array.from(ref.psd);
    const finder = new SpurFinder({ frequencies: f, binHz: fs / segment, mainLobeHalfWidth: hannLobe, maxLines: 2 });
    // 15 averages: a bin is chi2(30)/30 distributed, its median 0.978 (scipy.stats.chi2.median(30)/30), so a bin
    // ten times the median has probability 5e-45 (scipy.stats.chi2.sf(10 · chi2.median(30), 30)).
    expect(finder.find(psd, 10)).toBe(0);
    psd[100] *= 100;
    psd[200] *= 1000;
    psd[300] *= 50;
    expect(finder.find(psd, 10)).toBe(2);
    expect(Array.from(finder.lineBin.subarray(0, 2)).sort((a, b) => a - b)).toEqual([100, 200]);
  });
});
