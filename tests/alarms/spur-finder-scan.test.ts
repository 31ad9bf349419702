// The one-pass maxima scan of SpurFinder against the plain scan it replaced (every bin tested against its ±L
// neighbours), bit for bit on random densities: Welch-like χ² scatter over a 1/f slope with lines, coarse ties,
// flat runs, a small line capacity and NaN bins. The plain scan itself is checked against scipy in
// spur-finder.test.ts; this file proves the faster scan changes nothing.
import { describe, expect, it } from 'vitest';
import { SpurFinder } from '../../dsp/detection/spur-finder.ts';
import { SeededRandom } from '../../dsp/random.ts';
import { PlainScanSpurFinder } from './plain-scan-spur-finder.ts';

const bins = 2049;
const frequencies = Float64Array.from({ length: bins }, (_, k) => k * 1.953125);

function density(rng: SeededRandom, kind: 'scatter' | 'ties' | 'flat'): Float64Array {
  const psd = new Float64Array(bins);
  for (let k = 0; k < bins; k++) {
    // Mean of 8 exponential variates (χ² with 16 degrees of freedom / 16) over a 1/f + white floor.
    let s = 0;
    for (let i = 0; i < 8; i++) s -= Math.log(1 - rng.uniform());
    psd[k] = 1e-15 * (1 + 40 / (k + 1)) * (s / 8);
  }
  for (let t = 0; t < 12; t++) {
    const at = 20 + Math.floor(rng.uniform() * (bins - 40));
    const height = 10 ** (0.5 + 3 * rng.uniform());
    psd[at] *= height;
    psd[at - 1] *= height / 3;
    psd[at + 1] *= height / 4;
  }
  if (kind === 'ties') for (let k = 0; k < bins; k++) psd[k] = Math.round(psd[k] / 1e-15) * 1e-15;
  if (kind === 'flat')
    for (let k = 0; k < bins; k += 37) psd.fill(psd[k], k, Math.min(bins, k + 1 + Math.floor(rng.uniform() * 9)));
  return psd;
}

function same(a: SpurFinder, b: PlainScanSpurFinder, n: number): void {
  for (const key of ['lineBin', 'lineFrequency', 'lineAmplitude', 'lineHeightDb', 'lineFloor'] as const) {
    expect(Array.from(a[key].subarray(0, n))).toEqual(Array.from(b[key].subarray(0, n)));
  }
}

describe('SpurFinder one-pass scan', () => {
  it('finds bit for bit the lines of the plain scan on random densities, ties and flat runs', () => {
    const rng = new SeededRandom(15);
    let lines = 0;
    for (let trial = 0; trial < 300; trial++) {
      const kind = (['scatter', 'ties', 'flat'] as const)[trial % 3];
      const psd = density(rng, kind);
      const lobe = [1, 2, 2.5, 3, 4.2][trial % 5];
      const options = { frequencies, binHz: 1.953125, mainLobeHalfWidth: lobe, maxLines: trial % 4 === 0 ? 3 : 64 };
      const fast = new SpurFinder(options);
      const plain = new PlainScanSpurFinder(options);
      const ratio = [1.5, 3, 10][trial % 3];
      const n = fast.find(psd, ratio);
      expect(n).toBe(plain.find(psd, ratio));
      same(fast, plain, n);
      lines += n;
    }
    // The comparison must have had lines to compare (a scan that finds nothing would agree trivially).
    expect(lines).toBeGreaterThan(1000);
  });

  it('treats NaN bins exactly as the plain scan does (same lines, or the same refusal)', () => {
    const rng = new SeededRandom(16);
    for (let trial = 0; trial < 60; trial++) {
      const psd = density(rng, 'scatter');
      for (let i = 0; i < 5; i++) psd[Math.floor(rng.uniform() * bins)] = NaN;
      if (trial % 10 === 0) psd[3] = NaN; // inside the truncated edge window, where the median itself sees it
      const options = { frequencies, binHz: 1.953125, mainLobeHalfWidth: 2 };
      const fast = new SpurFinder(options);
      const plain = new PlainScanSpurFinder(options);
      let expected: number | string;
      try {
        expected = plain.find(psd, 3);
      } catch (e) {
        expected = String(e);
      }
      let got: number | string;
      try {
        got = fast.find(psd, 3);
      } catch (e) {
        got = String(e);
      }
      expect(got).toBe(expected);
      if (typeof got === 'number') same(fast, plain, got);
    }
  });
});
