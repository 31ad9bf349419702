// The dashboard's converter units: dBFS/√Hz (AES17: 0 dBFS is the RMS of a sine whose peak just reaches full
// scale) and LSB/√Hz (density ÷ converter step), offered only where the channel's converter is known, and the CSV
// export in them. References: hand-worked values (common practice) and numpy.
import { describe, expect, it } from 'vitest';
import { execFileSync } from 'node:child_process';
import {
  converterScale,
  convertInto,
  densityLabel,
  formatAmplitude,
  formatDensity,
  fromPsd,
  isLogAxis,
  unitsAvailable,
} from '../../dashboard/units.ts';
import { spectrumCsv } from '../../dashboard/spectrum-csv.ts';
import { rmsToDbfs, rmsToLsb } from '../../dsp/units.ts';
import { si } from '../../dashboard/format.ts';
import type { SpectrumContext } from '../../protocol/messages.ts';
import type { DecodedFrame } from '../../protocol/frame.ts';

// The demo's converter: 24-bit, 2.98e-7 V per count, 8 388 607 counts peak (recordings/demo.wav.json).
const LSB = 2.98e-7;
const FS = 8388607 * LSB;
const demo = { inputReferred: false, gain: 100, lsb: LSB, fullScale: FS };

function numpy(script: string, input: unknown): unknown {
  const out = execFileSync('python3', ['-c', `import json, sys, numpy as np\nd = json.load(sys.stdin)\n${script}`], {
    input: JSON.stringify(input),
  });
  return JSON.parse(out.toString());
}

describe('dBFS/√Hz and LSB/√Hz of a density', () => {
  it('a full-scale sine reads 0 dBFS and a full-scale square +3.01 dBFS (AES17, common practice)', () => {
    const k = converterScale('dbfs', { inputReferred: false, fullScale: 2.5 })!;
    // Mean square of a sine of peak 2.5 V: 2.5²/2.
    expect(fromPsd('dbfs', ((2.5 * 2.5) / 2) * k)).toBeCloseTo(0, 12);
    expect(fromPsd('dbfs', 2.5 * 2.5 * k)).toBeCloseTo(10 * Math.log10(2), 12);
  });

  it('1 µV/√Hz at 2.5 V full scale is −124.95 dBFS/√Hz: 20·log10(1e-6·√2/2.5), worked by hand (common practice)', () => {
    // 1e-6·√2/2.5 = 5.656854e-7; log10 of it = 0.752575 − 7 = −6.247425; × 20 = −124.9485.
    const k = converterScale('dbfs', { inputReferred: false, fullScale: 2.5 })!;
    expect(fromPsd('dbfs', 1e-12 * k)).toBeCloseTo(-124.9485, 4);
    // The same number analyze prints (dsp/units.ts rmsToDbfs of the ASD).
    expect(fromPsd('dbfs', 1e-12 * k)).toBeCloseTo(rmsToDbfs(1e-6, 2.5), 12);
  });

  it('1 µV/√Hz with a 2.98e-7 V step is 3.356 LSB/√Hz (1e-6 / 2.98e-7, worked by hand)', () => {
    const k = converterScale('lsb', demo)!;
    expect(fromPsd('lsb', 1e-12 * k)).toBeCloseTo(3.3557, 4);
    expect(fromPsd('lsb', 1e-12 * k)).toBeCloseTo(rmsToLsb(1e-6, LSB), 12);
  });

  it('converts a whole spectrum as numpy does: 10·log10(2·PSD/FS²) and √PSD/lsb', () => {
    const psd = Float64Array.from({ length: 64 }, (_v, i) => (i === 7 ? 0 : 1e-14 * (1 + i) ** 1.5));
    const db = new Float64Array(63);
    const lsb = new Float64Array(63);
    convertInto('dbfs', psd, 1, db, converterScale('dbfs', demo)!);
    convertInto('lsb', psd, 1, lsb, converterScale('lsb', demo)!);
    const ref = numpy(
      `p = np.array(d['psd'][1:])
with np.errstate(divide='ignore'):
    db = 10 * np.log10(2 * p / d['fs'] ** 2)
print(json.dumps({'db': [None if not np.isfinite(v) else float(v) for v in db], 'lsb': (np.sqrt(p) / d['lsb']).tolist()}))`,
      { psd: Array.from(psd), fs: FS, lsb: LSB },
    ) as { db: (number | null)[]; lsb: number[] };
    for (let i = 0; i < 63; i++) {
      if (ref.db[i] === null)
        expect(db[i]).toBeNaN(); // a zero bin is a gap, as in the other units
      else expect(Math.abs(db[i] - ref.db[i]!)).toBeLessThan(1e-9);
      if (ref.lsb[i] === 0) expect(lsb[i]).toBeNaN();
      else expect(Math.abs(lsb[i] / ref.lsb[i] - 1)).toBeLessThan(1e-12);
    }
  });

  it('labels say which: dBFS/√Hz on a dB axis, LSB/√Hz on a log axis; amplitudes as dBFS and LSB rms', () => {
    expect(densityLabel('dbfs', 'V')).toBe('dBFS/√Hz');
    expect(densityLabel('lsb', 'V')).toBe('LSB/√Hz');
    expect(isLogAxis('dbfs')).toBe(false);
    expect(isLogAxis('lsb')).toBe(true);
    expect(formatDensity('dbfs', -124.948, 'V', si)).toBe('-124.9 dBFS/√Hz');
    expect(formatDensity('lsb', 3.3557, 'V', si)).toBe('3.36 LSB/√Hz');
    // A full-scale sine's RMS scaled by √(2/FS²) is 1: 0 dBFS.
    expect(formatAmplitude('dbfs', 1, 'V', si)).toBe('0.0 dBFS');
    expect(formatAmplitude('lsb', 12.5, 'V', si)).toBe('12.5 LSB rms');
  });
});

describe('where the entries are offered', () => {
  it('offers dBFS where every channel knows its full scale and LSB where every channel knows its step', () => {
    expect(unitsAvailable([demo, demo])).toEqual(['asd', 'dbv', 'psd', 'dbfs', 'lsb']);
    // A float WAV from elsewhere: full scale ±1 FS is known, the step is not.
    expect(unitsAvailable([{ inputReferred: false, fullScale: 1 }])).toEqual(['asd', 'dbv', 'psd', 'dbfs']);
    // No converter facts (a text source, or no sidecar): the entries are absent.
    expect(unitsAvailable([undefined])).toEqual(['asd', 'dbv', 'psd']);
    expect(unitsAvailable([demo, { inputReferred: false, gain: 2 }])).toEqual(['asd', 'dbv', 'psd']);
    expect(converterScale('dbfs', undefined)).toBeNull();
  });
});

describe('CSV export in dBFS/√Hz', () => {
  it('labels the columns dBFS/√Hz, says the values are re the converter, and writes numpy’s numbers', () => {
    const ctx: SpectrumContext = {
      id: 1,
      settings: { sampleRate: 8000, segment: 8, overlap: 0.5, window: 'hann', detrend: 'mean' },
      averaging: { mode: 'exponential', tauSeconds: 1 },
      nenbw: 1.5,
      enbwHz: 1500,
      binHz: 1000,
      bins: 5,
      channels: [{ name: 'bridge', unit: 'V', front: demo }],
      mainsHz: null,
    } as unknown as SpectrumContext;
    const psd = Float32Array.from([1e-9, 4e-13, 1e-12, 2.5e-13, 9e-14]);
    const frame = {
      kind: 'spectrum',
      sample: 8000,
      sampleRate: 8000,
      binHz: 1000,
      length: 5,
      channels: 1,
      averages: Float32Array.from([10]),
      values: [psd],
    } as unknown as DecodedFrame;
    const csv = spectrumCsv(ctx, frame, 'dbfs', '2026-12-03T00:00:00Z', {
      view: 'adc',
      factors: [converterScale('dbfs', demo)!],
    });
    const lines = csv.trim().split('\n');
    expect(lines).toContain('Hz,dBFS/√Hz');
    expect(lines).toContain('# referred_to,adc (re the converter)');
    const rows = lines.filter((l) => /^[0-9]/.test(l)).map((l) => Number(l.split(',')[1]));
    const ref = numpy(
      `print(json.dumps((10 * np.log10(2 * np.array(d['p'], dtype=np.float32).astype(np.float64) / d['fs'] ** 2)).tolist()))`,
      {
        p: Array.from(psd),
        fs: FS,
      },
    ) as number[];
    expect(rows.length).toBe(5);
    for (let i = 0; i < 5; i++) expect(Math.abs(rows[i] - ref[i])).toBeLessThan(1e-9);
  });
});
