import { describe, expect, it } from 'vitest';
import { leakageEnvelope } from '../../dsp/detection/leakage.ts';
import { makeWindow } from '../../dsp/windows.ts';

describe('leakageEnvelope', () => {
  it('falls 18 dB per octave far from a Hann line and stays below its −31.5 dB highest sidelobe plus scalloping', () => {
    // Heinzel, Rüdiger & Schilling 2002, appendix C (Hanning): highest sidelobe −31.5 dB, sidelobe fall-off
    // 18 dB/octave, worst-case scalloping loss 1.42 dB (the envelope normalises by the worst-case peak).
    const L = leakageEnvelope(makeWindow('hann', 4096).values, 64);
    const db = (x: number) => 10 * Math.log10(x);
    // 18 dB/octave is power ∝ d⁻⁶; the worst case over a bin's ±½ range sits at its near edge, d − ½.
    expect(db(L[32]) - db(L[16])).toBeCloseTo(-60 * Math.log10(31.5 / 15.5), 1);
    for (let d = 3; d <= 64; d++) expect(db(L[d])).toBeLessThan(-31.5 + 1.42 + 0.05);
    expect(db(L[0])).toBeCloseTo(1.42, 1);
  });

  it('keeps a flat-top window’s far leakage far below Hann’s (faster sidelobe decay)', () => {
    // HFT95: highest sidelobe −95 dB (Heinzel 2002, appendix C).
    const L = leakageEnvelope(makeWindow('hft95', 4096).values, 64);
    expect(10 * Math.log10(L[20])).toBeLessThan(-95 + 0.1);
  });
});
