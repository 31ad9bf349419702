// Noise budget formulas: worked examples (values from memory, the usual textbook figures) and the same formulas
// evaluated in python with scipy.constants (CODATA exact k and e).
import { execFileSync } from 'node:child_process';
import { describe, expect, it } from 'vitest';
import {
  BOLTZMANN,
  ELEMENTARY_CHARGE,
  gaussianPeakToPeak,
  johnsonCurrentDensity,
  johnsonVoltageDensity,
  quadratureSum,
  quantizationDensity,
  shotNoiseDensity,
  whiteNoiseRms,
} from '../../dsp/noise-theory.ts';
import {
  amplitudeRatioDb,
  dbToAmplitudeRatio,
  dbToPowerRatio,
  powerRatioDb,
  psdToDbvPerRootHz,
  rmsToDbfs,
  rmsToDbv,
} from '../../dsp/units.ts';

const py = JSON.parse(
  execFileSync(
    'python3',
    [
      '-c',
      `import json, math
from scipy.constants import k, e
print(json.dumps(dict(k=k, e=e, johnson=math.sqrt(4*k*290*1e3), johnsonI=math.sqrt(4*k*300/1e4),
  shot=math.sqrt(2*e*1e-3), adc=(5/2**16)/math.sqrt(6*100e3), white=10e-9*math.sqrt(20e3))))`,
    ],
    { encoding: 'utf8' },
  ),
) as Record<string, number>;

describe('noise theory worked examples', () => {
  it('uses the exact SI constants (scipy.constants k, e; SI 2019)', () => {
    expect(BOLTZMANN).toBe(py.k);
    expect(ELEMENTARY_CHARGE).toBe(py.e);
  });

  it('10 nV/√Hz over 20 kHz is 1.414 µV rms (worked example, from memory)', () => {
    expect(whiteNoiseRms(10e-9, 20e3) * 1e6).toBeCloseTo(1.414, 3);
    expect(whiteNoiseRms(10e-9, 20e3)).toBeCloseTo(py.white, 20);
  });

  it('a 1 kΩ resistor at 290 K has 4.00 nV/√Hz Johnson noise (worked example, from memory)', () => {
    expect(johnsonVoltageDensity(1e3, 290) * 1e9).toBeCloseTo(4.0, 2);
    expect(johnsonVoltageDensity(1e3, 290) / py.johnson - 1).toBeCloseTo(0, 14);
    expect(johnsonCurrentDensity(1e4, 300) / py.johnsonI - 1).toBeCloseTo(0, 14);
  });

  it('1 mA of DC carries 17.9 pA/√Hz shot noise (worked example, from memory)', () => {
    expect(shotNoiseDensity(1e-3) * 1e12).toBeCloseTo(17.9, 1);
    expect(shotNoiseDensity(1e-3) / py.shot - 1).toBeCloseTo(0, 14);
  });

  it('an ideal 16-bit ADC over a 5 V span at 100 kS/s has a 98.5 nV/√Hz floor (worked example, from memory)', () => {
    expect(quantizationDensity(5, 16, 100e3) * 1e9).toBeCloseTo(98.5, 1);
    expect(quantizationDensity(5, 16, 100e3) / py.adc - 1).toBeCloseTo(0, 14);
  });

  it('adds uncorrelated terms in quadrature and estimates Gaussian peak-to-peak as 6.6 × rms (common practice)', () => {
    expect(quadratureSum([3e-9, 4e-9])).toBeCloseTo(5e-9, 20);
    expect(gaussianPeakToPeak(1e-6)).toBeCloseTo(6.6e-6, 18);
    expect(() => johnsonVoltageDensity(-1, 300)).toThrow(/resistance/);
    expect(() => quantizationDensity(5, 0, 1e3)).toThrow(/bits/);
  });
});

describe('decibel conversions', () => {
  it('follows 10·log10 for power and 20·log10 for amplitude (IEC 60027-3, common practice)', () => {
    expect(powerRatioDb(2)).toBeCloseTo(3.0103, 4);
    expect(amplitudeRatioDb(2)).toBeCloseTo(6.0206, 4);
    expect(dbToPowerRatio(powerRatioDb(7.3))).toBeCloseTo(7.3, 12);
    expect(dbToAmplitudeRatio(-20)).toBeCloseTo(0.1, 15);
  });

  it('reads 1 µV/√Hz as −120 dBV/√Hz and 1 V rms as 0 dBV (definition re 1 V)', () => {
    expect(psdToDbvPerRootHz(1e-12)).toBeCloseTo(-120, 12);
    expect(rmsToDbv(1)).toBe(0);
  });

  it('reads a full-scale sine as 0 dBFS and a full-scale square as +3.01 dBFS (AES17 convention)', () => {
    expect(rmsToDbfs(2.5 * Math.SQRT1_2, 2.5)).toBeCloseTo(0, 12);
    expect(rmsToDbfs(2.5, 2.5)).toBeCloseTo(3.0103, 4);
    expect(() => rmsToDbfs(1, 0)).toThrow(/full scale/);
  });
});
