import { execFileSync } from 'node:child_process';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { SeededRandom } from '../../dsp/random.ts';
import { WavWriter } from '../../agent/wav/writer.ts';
import { Python, root, tempDir } from '../wav/support.ts';
import { psdMismatch, runCli, welchReference, type ReferenceSettings } from './support.ts';

let py: Python;
let dir: string;

// Test recordings written by scipy.io.wavfile.write from numpy.random.default_rng(7): white noise, a 1 kHz sine on
// ch1 and a DC offset with a slow ramp on ch2 (so mean and linear detrend differ), as float32 and int16.
const WRITE_FILES = String.raw`
d = args[0]
rng = np.random.default_rng(7)
n = 60000; t = np.arange(n) / 20000.0
x = np.stack([1e-6 * rng.standard_normal(n),
              2e-7 * rng.standard_normal(n) + 5e-6 * np.sin(2 * np.pi * 1000 * t),
              3e-7 * rng.standard_normal(n) + 1e-3 + 2e-4 * t], axis=1).astype(np.float32)
wavfile.write(d + "/f32.wav", 20000, x)
y = np.clip(np.round(rng.standard_normal((12000, 2)) * 3000), -32768, 32767).astype(np.int16)
wavfile.write(d + "/i16.wav", 48000, y)
z = (rng.standard_normal(20000) * 0.1 + 0.5).astype(np.float64)
wavfile.write(d + "/f64.wav", 8000, z)
result = True
`;

beforeAll(async () => {
  py = new Python();
  dir = tempDir('analyze');
  await py.run(WRITE_FILES, dir);
  // 24-bit extensible and other encodings from the fixture script (each checked there against scipy.io.wavfile.read).
  execFileSync('python3', [join(root, 'tests/fixtures/make_wav_fixtures.py'), join(dir, 'fx')]);
});
afterAll(() => py.close());

interface JsonReport {
  file: string;
  sampleRate: number;
  samples: number;
  settings: Record<string, number | string>;
  channels: {
    name: string;
    unit: string;
    frequency: number[];
    psd: number[];
    asd: number[];
    rms: number;
    bands: { low: number; high: number; rms: number }[];
  }[];
}

function analyzeJson(...args: string[]): JsonReport {
  const r = runCli('analyze', ...args, '--json');
  // The 24-bit fixture holds full-scale codes on purpose: the clip warning is the only stderr allowed.
  expect(r.stderr.replace(/^floorline analyze: warning: ch\d: \d+ clipped sample\(s\) at .*\n/gm, '')).toBe('');
  expect(r.status).toBe(0);
  return JSON.parse(r.stdout);
}

/** Every check of one report against scipy.signal.welch on scipy.io.wavfile.read's samples. */
async function expectMatchesScipy(path: string, report: JsonReport, s: ReferenceSettings): Promise<void> {
  // Without --band the report carries the default decade bands: check those edges against numpy too.
  if (s.bands.length === 0)
    s = { ...s, bands: report.channels[0].bands.map((b) => [b.low, b.high] as [number, number]) };
  const ref = await welchReference(py, path, s);
  expect(report.sampleRate).toBe(ref.rate);
  expect(report.samples).toBe(ref.samples);
  expect(report.settings.segment).toBe(s.segment);
  expect(report.settings.averages).toBe(ref.averages); // len(scipy.signal.spectrogram(...)[1])
  expect(report.settings.nenbw as number).toBeCloseTo(ref.nenbw, 12); // N·Σw²/(Σw)² of scipy.signal.get_window
  expect(report.settings.binHz).toBe(ref.f[1]); // scipy.signal.welch frequency spacing
  expect(report.settings.enbwHz as number).toBeCloseTo((ref.nenbw * ref.rate) / s.segment, 9);
  expect(report.channels.length).toBe(ref.psd.length);
  for (let c = 0; c < ref.psd.length; c++) {
    const ch = report.channels[c];
    expect(ch.frequency).toEqual(ref.f);
    const m = psdMismatch(ch.psd, ref.psd[c]);
    expect(m.compared).toBeGreaterThan(ref.f.length / 2);
    expect(m.bad, `${path} ch${c} worst ${m.worst}`).toBe(0);
    for (let k = 0; k < ch.psd.length; k++) expect(ch.asd[k]).toBe(Math.sqrt(ch.psd[k]));
    // Total RMS: sqrt(Σ psd[1:]·Δf) in numpy (DC excluded); bands: bins with lo ≤ f ≤ hi (rule of docs/ARCHITECTURE.md).
    expect(Math.abs(ch.rms - ref.rms[c]) / ref.rms[c]).toBeLessThan(1e-9);
    expect(ch.bands.map((b) => [b.low, b.high])).toEqual(s.bands);
    for (let b = 0; b < s.bands.length; b++)
      expect(Math.abs(ch.bands[b].rms - ref.bands[c][b]) / ref.bands[c][b]).toBeLessThan(1e-9);
  }
}

describe('floorline analyze --json', () => {
  it('matches scipy.signal.welch with the default settings on a float32 file, with bands', async () => {
    const path = join(dir, 'f32.wav');
    const report = analyzeJson(path, '--band', '20:2000', '--band', '990:1010', '--band', '1000:10000');
    // Defaults (docs/ARCHITECTURE.md): 60000 samples give ≥ 8 averages at 4096, Hann, overlap 0.5, detrend mean.
    expect(report.settings).toMatchObject({ segment: 4096, window: 'hann', overlap: 0.5, detrend: 'mean' });
    expect(Object.keys(report)).toEqual(['file', 'sampleRate', 'samples', 'settings', 'channels']);
    expect(Object.keys(report.settings)).toEqual([
      'segment',
      'window',
      'overlap',
      'detrend',
      'averages',
      'nenbw',
      'enbwHz',
      'binHz',
      'average',
      'excludedSegments',
      'equivalentAverages',
      'span',
    ]);
    // A float file from elsewhere reads as FS: full scale ±1 is known (fullScale), its step is not (no lsb).
    expect(Object.keys(report.channels[0])).toEqual([
      'name',
      'unit',
      'referredTo',
      'frequency',
      'psd',
      'asd',
      'rms',
      'bands',
      'clippedSamples',
      'missingSamples',
      'fullScale',
    ]);
    expect(report.channels.map((c) => `${c.name}/${c.unit}`)).toEqual(['ch0/FS', 'ch1/FS', 'ch2/FS']);
    await expectMatchesScipy(path, report, {
      segment: 4096,
      scipyWindow: 'hann',
      overlap: 0.5,
      detrend: 'constant',
      bands: [
        [20, 2000],
        [990, 1010],
        [1000, 10000],
      ],
    });
  });

  it('picks the largest power-of-two segment giving 8 averages for a short file, and applies --scale', async () => {
    const path = join(dir, 'i16.wav');
    const report = analyzeJson(path, '--scale', '2.5', '--band', '100:24000');
    // 12000 samples: 4096 gives 4 segments, 2048 gives 10 (len(scipy.signal.spectrogram(...)[1]) checks it).
    expect(report.settings.segment).toBe(2048);
    expect(report.channels[0].unit).toBe('V');
    await expectMatchesScipy(path, report, {
      segment: 2048,
      scipyWindow: 'hann',
      overlap: 0.5,
      detrend: 'constant',
      bands: [[100, 24000]],
      scale: 2.5,
    });
  });

  it('matches scipy with Blackman-Harris, 75 % overlap and linear detrend on 24-bit extensible PCM', async () => {
    const path = join(dir, 'fx/ext_int24_4ch.wav');
    const report = analyzeJson(
      path,
      '--segment',
      '512',
      '--window',
      'blackman-harris',
      '--overlap',
      '0.75',
      '--detrend',
      'linear',
      '--band',
      '0:48000',
    );
    // scipy 'blackmanharris' is the 4-term 92 dB Blackman-Harris (Harris 1978), the same coefficients as ours.
    await expectMatchesScipy(path, report, {
      segment: 512,
      scipyWindow: 'blackmanharris',
      overlap: 0.75,
      detrend: 'linear',
      bands: [[0, 48000]],
    });
  });

  it('matches scipy with a rectangular window and no detrend on float64 (DC kept in the spectrum)', async () => {
    const path = join(dir, 'f64.wav');
    const report = analyzeJson(path, '--segment', '1024', '--window', 'rect', '--detrend', 'none', '--overlap', '0');
    await expectMatchesScipy(path, report, {
      segment: 1024,
      scipyWindow: 'boxcar',
      overlap: 0,
      detrend: false,
      bands: [],
    });
    // No --band: decade bands (edges at powers of ten inside the usable range) and the whole usable band, as live.
    const edges = report.channels[0].bands.slice(0, -1).map((b) => b.high);
    expect(edges.slice(0, -1)).toEqual([100, 1000]);
    // The 0.5 offset puts 0.25 FS² of power at DC, which 'none' keeps and the total RMS leaves out.
    expect(report.channels[0].psd[0]).toBeGreaterThan(1e3 * report.channels[0].psd[1]);
  });

  it('reads our recordings with their channel names and volts, matching scipy on the float32 samples', async () => {
    const path = join(dir, 'ours.wav');
    const rng = new SeededRandom(11);
    const data = [rng.fillGaussian(new Float64Array(30000), 2e-6), rng.fillGaussian(new Float64Array(30000), 5e-7)];
    const w = new WavWriter(
      path,
      {
        sampleRate: 10000,
        channels: [
          { name: 'lna-out', unit: 'V' },
          { name: 'ref', unit: 'V' },
        ],
        firstSample: 0,
      },
      { durable: false },
    );
    w.append(data, 30000);
    w.close();
    const report = analyzeJson(path, '--band', '10:1000');
    expect(report.channels.map((c) => `${c.name}/${c.unit}`)).toEqual(['lna-out/V', 'ref/V']);
    await expectMatchesScipy(path, report, {
      segment: 4096,
      scipyWindow: 'hann',
      overlap: 0.5,
      detrend: 'constant',
      bands: [[10, 1000]],
    });
  });
});
