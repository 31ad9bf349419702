// Real and complex FFTs against numpy.fft (numpy.fft.rfft / numpy.fft.fft on the same samples, via python3).
import { execFileSync } from 'node:child_process';
import { describe, expect, it } from 'vitest';
import { ComplexFft } from '../../dsp/complex-fft.ts';
import { SegmentConditioner } from '../../dsp/detrend.ts';
import { SeededRandom } from '../../dsp/random.ts';
import { RealFftPower } from '../../dsp/real-fft-power.ts';
import { RealFft } from '../../dsp/rfft.ts';
import { makeWindow } from '../../dsp/windows.ts';

const SIZES = [8, 16, 64, 128, 1024, 4096, 1 << 15];
const rng = new SeededRandom(5);
const inputs = SIZES.map((n) => rng.fillGaussian(new Float64Array(2 * n)));

const script = `
import sys, json, numpy as np
data = json.load(sys.stdin)
out = []
for x in data:
    x = np.array(x); n = len(x) // 2
    r = np.fft.rfft(x[:n]); c = np.fft.fft(x[:n] + 1j * x[n:])
    out.append(dict(rre=r.real.tolist(), rim=r.imag.tolist(), cre=c.real.tolist(), cim=c.imag.tolist()))
print(json.dumps(out))
`;
const ref = JSON.parse(
  execFileSync('python3', ['-c', script], {
    input: JSON.stringify(inputs.map((x) => Array.from(x))),
    encoding: 'utf8',
    maxBuffer: 1 << 28,
  }),
) as { rre: number[]; rim: number[]; cre: number[]; cim: number[] }[];

/** Largest error relative to the largest magnitude of the reference. */
function worst(ours: ArrayLike<number>, theirs: number[]): number {
  let peak = 0;
  let err = 0;
  for (let i = 0; i < theirs.length; i++) {
    peak = Math.max(peak, Math.abs(theirs[i]));
    err = Math.max(err, Math.abs(ours[i] - theirs[i]));
  }
  return err / peak;
}

describe('FFTs agree with numpy.fft to rounding', () => {
  SIZES.forEach((n, s) => {
    const x = inputs[s].subarray(0, n);
    const r = ref[s];
    it(`RealFft (fft.js) equals numpy.fft.rfft at N=${n}`, () => {
      const out = new Float64Array(n + 2);
      new RealFft(n).transform(x.slice(), out);
      expect(
        worst(
          out.filter((_, i) => i % 2 === 0),
          r.rre,
        ),
      ).toBeLessThan(1e-13);
      expect(
        worst(
          out.filter((_, i) => i % 2 === 1),
          r.rim,
        ),
      ).toBeLessThan(1e-13);
    });

    it(`ComplexFft equals numpy.fft.fft at M=${n}`, () => {
      const fft = new ComplexFft(n);
      const re = new Float64Array(n);
      const im = new Float64Array(n);
      for (let i = 0; i < n; i++) {
        re[i] = inputs[s][fft.bitrev[i]];
        im[i] = inputs[s][n + fft.bitrev[i]];
      }
      fft.transformBitReversed(re, im);
      expect(worst(re, r.cre)).toBeLessThan(1e-13);
      expect(worst(im, r.cim)).toBeLessThan(1e-13);
    });

    it(`RealFftPower equals |numpy.fft.rfft|² at N=${n}, plain and with fused detrend × window`, () => {
      const p = new RealFftPower(n);
      const power = new Float64Array(n / 2 + 1);
      p.power(x.slice(), power);
      const mag2 = r.rre.map((v, k) => v * v + r.rim[k] * r.rim[k]);
      expect(worst(power, mag2)).toBeLessThan(1e-13);
      // The fused path must equal the plain path on the conditioned copy (same rounding: bit-identical).
      const win = makeWindow('hft95', n).values;
      const cond = new SegmentConditioner(win, 'linear');
      const y = new Float64Array(n);
      cond.apply(x, 0, y);
      p.power(y, power);
      const fused = new Float64Array(n / 2 + 1);
      p.windowedPower(x, 0, win, cond.mean, cond.slope, fused);
      expect(Array.from(fused)).toEqual(Array.from(power));
      // accumulate adds onto what is there: twice the same segment is exactly twice its power.
      const sum = new Float64Array(n / 2 + 1);
      p.windowedPower(x, 0, win, cond.mean, cond.slope, sum, true);
      p.windowedPower(x, 0, win, cond.mean, cond.slope, sum, true);
      expect(Array.from(sum)).toEqual(Array.from(power, (v) => 2 * v));
    });
  });

  it('refuses sizes that are not powers of two', () => {
    expect(() => new RealFft(48)).toThrow(/power of two/);
    expect(() => new ComplexFft(6)).toThrow(/power of two/);
    expect(() => new RealFftPower(100)).toThrow(/power of two/);
    expect(() => new RealFft(64).transform(new Float64Array(32), new Float64Array(66))).toThrow(/plan is for 64/);
  });
});
