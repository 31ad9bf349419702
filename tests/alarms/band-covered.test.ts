// Band levels when new lines cover part or all of a band (their lobes and skirts are left out of the floor).
import { spawnSync } from 'node:child_process';
import { describe, expect, it } from 'vitest';
import { BandCompare } from '../../dsp/detection/band-compare.ts';
import { bandDegreesOfFreedom, binPowerCorrelation, conservativeAverages } from '../../dsp/detection/threshold.ts';
import { SeededRandom } from '../../dsp/random.ts';
import { makeWindow } from '../../dsp/windows.ts';

const FS = 4000;
const SEGMENT = 1024;
const BIN = FS / SEGMENT;
const BINS = SEGMENT / 2 + 1;

/** χ²(2)/2-scattered densities around `level` (a periodogram bin of noise, common practice), seeded. */
function scattered(seed: number, level: number): Float64Array {
  const r = new SeededRandom(seed);
  const out = new Float64Array(BINS);
  for (let k = 0; k < BINS; k++) {
    const a = r.gaussian();
    const b = r.gaussian();
    out[k] = (level * (a * a + b * b)) / 2;
  }
  return out;
}

function numpyReference(
  live: Float64Array,
  base: Float64Array,
  lo: number,
  hi: number,
  mask: Uint8Array,
  nu: [number, number][],
  alpha: number,
): { kept: number; all: number; fdb: number[] } {
  const code = `
import json, sys, numpy as np
from scipy.stats import f
a = json.load(sys.stdin)
live, base, mask = np.array(a["live"]), np.array(a["base"]), np.array(a["mask"], bool)
sel = np.arange(len(live)); sel = (sel >= a["lo"]) & (sel <= a["hi"])
keep = sel & ~mask
print(json.dumps({"kept": float(10*np.log10(live[keep].sum()/base[keep].sum())) if keep.any() else None,
                  "all": float(10*np.log10(live[sel].sum()/base[sel].sum())),
                  "fdb": [float(10*np.log10(f.ppf(1 - a["alpha"], n1, n2))) for n1, n2 in a["nu"]]}))`;
  const r = spawnSync('python3', ['-c', code], {
    input: JSON.stringify({
      live: Array.from(live),
      base: Array.from(base),
      mask: Array.from(mask),
      lo,
      hi,
      nu,
      alpha,
    }),
    encoding: 'utf8',
  });
  if (r.status !== 0) throw new Error(`python3 failed: ${r.stderr}`);
  return JSON.parse(r.stdout);
}

describe('a band under new lines', () => {
  it('is judged on its free bins while some are left, and on all its bins (flagged) when lines cover every one', () => {
    const corr = binPowerCorrelation(makeWindow('hann', SEGMENT).values);
    const base = scattered(41, 1e-16);
    // A live floor 3 dB up: the band level must come out near +3 dB whichever bins are kept.
    const live = scattered(42, 2e-16);
    const low = 100;
    const high = 200;
    const lo = Math.ceil(low / BIN);
    const hi = Math.floor(high / BIN);
    const alpha = 1e-3;
    const cmp = new BandCompare({
      binHz: BIN,
      bands: [{ low, high }],
      baselinePsd: base,
      baselineEquivalentAverages: 50,
      correlation: corr,
      marginDb: 0,
      alpha,
    });
    const K = 20;
    const k = conservativeAverages(K);
    const all = hi - lo + 1;

    // 60 % of the band under a line's lobe and skirt: the rest still shows the floor.
    const partial = new Uint8Array(BINS);
    const covered = Math.ceil(0.6 * all);
    for (let b = lo; b < lo + covered; b++) partial[b] = 1;
    const full = new Uint8Array(BINS);
    for (let b = lo - 3; b <= hi + 3; b++) full[b] = 1;
    const nu: [number, number][] = [
      [bandDegreesOfFreedom(k, all - covered, corr), bandDegreesOfFreedom(50, all - covered, corr)],
      [bandDegreesOfFreedom(k, all, corr), bandDegreesOfFreedom(50, all, corr)],
    ];
    const refPartial = numpyReference(live, base, lo, hi, partial, nu, alpha);

    cmp.evaluate(live, K, partial);
    expect(cmp.coveredByLines[0]).toBe(0);
    expect(cmp.levelDb[0]).toBeCloseTo(refPartial.kept, 9);
    // F bound over the kept bins' degrees of freedom, as scipy.stats.f.ppf gives it.
    expect(cmp.thresholdDb[0]).toBeCloseTo(refPartial.fdb[0], 4);

    cmp.evaluate(live, K, full);
    expect(cmp.coveredByLines[0]).toBe(1);
    expect(Number.isFinite(cmp.levelDb[0])).toBe(true);
    expect(cmp.levelDb[0]).toBeCloseTo(refPartial.all, 9);
    expect(cmp.thresholdDb[0]).toBeCloseTo(refPartial.fdb[1], 4);
    // Fewer bins, fewer degrees of freedom: the bound over the kept bins is the higher one.
    expect(refPartial.fdb[0]).toBeGreaterThan(refPartial.fdb[1]);
  });
});
