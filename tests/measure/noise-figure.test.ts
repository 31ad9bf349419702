// Noise figure and noise temperature: the definitions against hand-worked examples, and `analyze --source-ohms` on
// a file of known density against numpy (scipy.signal.welch's band mean density put through the same definition).
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { noiseFigure, noiseFigureFromTotal } from '../../dsp/measure/noise-figure.ts';
import { Python, tempDir } from '../wav/support.ts';
import { runCli } from '../analyze/support.ts';

describe('noise figure and noise temperature (hand-worked)', () => {
  it('an amplifier as noisy as its 1 kΩ source at 290 K: NF ≈ 3.01 dB, T_e ≈ 290 K', () => {
    // Worked by hand (common practice: 1 kΩ gives about 4 nV/√Hz at room temperature):
    //   4kTR = 4 × 1.380649e-23 × 290 × 1000 = 1.60155e-17 V²/Hz (√ = 4.0019 nV/√Hz);
    //   e_amp = 4 nV/√Hz: F = 1 + 16e-18 / 1.60155e-17 = 1.99903; NF = 10·log10(1.99903) = 3.0082 dB;
    //   T_e = T (F − 1) = 290 × 0.99903 = 289.72 K.
    const nf = noiseFigure(4e-9, 1000, 290);
    expect(nf.factor).toBeCloseTo(1.99903, 5);
    expect(nf.figureDb).toBeCloseTo(3.0082, 4);
    expect(nf.kelvin).toBeCloseTo(289.72, 2);
  });

  it('a 1 nV/√Hz amplifier on a 50 Ω source: NF ≈ 3.52 dB, T_e ≈ 362 K', () => {
    // By hand: 4kTR = 4 × 1.380649e-23 × 290 × 50 = 8.0078e-19 V²/Hz (√ = 0.895 nV/√Hz);
    //   F = 1 + 1e-18 / 8.0078e-19 = 2.2488; NF = 3.519 dB; T_e = 290 × 1.2488 = 362.1 K (= e²/(4kR)).
    const nf = noiseFigure(1e-9, 50);
    expect(nf.figureDb).toBeCloseTo(3.519, 3);
    expect(nf.kelvin).toBeCloseTo(362.1, 1);
  });

  it('from a total measured with the source connected: e² = 4kTR + e_amp² gives the same figure', () => {
    const source2 = 4 * 1.380649e-23 * 290 * 1000;
    const total = Math.sqrt(source2 + 16e-18);
    const a = noiseFigureFromTotal(total, 1000, 290);
    const b = noiseFigure(4e-9, 1000, 290);
    expect(a.figureDb).toBeCloseTo(b.figureDb, 12);
    expect(a.kelvin).toBeCloseTo(b.kelvin, 9);
    // A measurement at exactly the source's Johnson noise is a noiseless amplifier: 0 dB, 0 K.
    expect(noiseFigureFromTotal(Math.sqrt(source2), 1000, 290).figureDb).toBeCloseTo(0, 12);
  });
});

let py: Python;
let dir: string;

// numpy.random.default_rng(3): white noise in volts whose density is √(4kTR + e_amp²) for R = 1 kΩ, T = 290 K,
// e_amp = 4 nV/√Hz, at 20 kS/s for 10 s (σ = density·√(fs/2)); float32 by scipy.io.wavfile.write.
const WRITE = String.raw`
k = 1.380649e-23
density = np.sqrt(4 * k * 290 * 1000 + (4e-9) ** 2)
x = density * np.sqrt(10000.0) * np.random.default_rng(3).standard_normal(200000)
wavfile.write(args[0], 20000, x.astype(np.float32))
r, y = wavfile.read(args[0])
f, p = signal.welch(y.astype(np.float64), fs=r, nperseg=4096)
sel = (f >= 100) & (f <= 1000)
e2 = float(np.mean(p[sel]))
F = e2 / (4 * k * 290 * 1000)
result = {"nfDb": 10 * np.log10(F), "te": 290 * (F - 1), "nfBin": (10 * np.log10(p[1:] / (4 * k * 290 * 1000))).tolist()}
`;

beforeAll(() => {
  py = new Python();
  dir = tempDir('measure-nf');
});
afterAll(() => py.close());

describe('analyze --source-ohms', () => {
  it('per band and per bin equal to numpy on scipy.signal.welch, and near the 3.01 dB it was made with', async () => {
    const path = join(dir, 'amp.wav');
    const ref = await py.run<{ nfDb: number; te: number; nfBin: number[] }>(WRITE, path);
    const r = runCli('analyze', path, '--unit', 'V', '--band', '100:1000', '--source-ohms', '1000', '--json');
    expect(r.status, r.stderr).toBe(0);
    const nf = (
      JSON.parse(r.stdout) as {
        channels: {
          noiseFigure: {
            sourceOhms: number;
            sourceKelvin: number;
            bands: { noiseFigureDb: number; noiseTemperature: number }[];
            noiseFigureDb: (number | null)[];
          };
        }[];
      }
    ).channels[0].noiseFigure;
    expect(nf.sourceKelvin).toBe(290);
    expect(Math.abs(nf.bands[0].noiseFigureDb - ref.nfDb)).toBeLessThan(1e-9);
    expect(Math.abs(nf.bands[0].noiseTemperature - ref.te) / ref.te).toBeLessThan(1e-9);
    expect(nf.noiseFigureDb[0]).toBeNull(); // DC
    let worst = 0;
    for (let k = 1; k < nf.noiseFigureDb.length; k++)
      worst = Math.max(worst, Math.abs((nf.noiseFigureDb[k] as number) - ref.nfBin[k - 1]));
    expect(worst).toBeLessThan(1e-9);
    // 460 bins × ~93 averages: the band mean lands within 0.1 dB of the 3.008 dB the noise was made with.
    expect(Math.abs(nf.bands[0].noiseFigureDb - 3.008)).toBeLessThan(0.1);
    const text = runCli('analyze', path, '--unit', 'V', '--band', '100:1000', '--source-ohms', '1000');
    expect(text.stdout).toMatch(/source +1\.00 kΩ at 290 K: Johnson 4\.00 nV\/√Hz/);
    expect(text.stdout).toMatch(/NF, band 100–1000 Hz +3\.0\d dB, T_e 2\d\d K/);
  });
});
