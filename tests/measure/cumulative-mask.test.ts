// `analyze --cumulative` and `analyze --mask`: cumulative RMS against numpy.cumsum of scipy.signal.welch's density,
// a limit mask judged as numpy's log-log interpolation (numpy.interp on log f, log L) gives it, pass on a quiet
// file and fail at the line's frequency on a file with a line (exit 3), and bad masks refused naming the line.
import { writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { Python, tempDir } from '../wav/support.ts';
import { runCli } from '../analyze/support.ts';

let py: Python;
let dir: string;

// numpy.random.default_rng(21): white noise σ = 1 mV at 10 kS/s (density σ·√(2/fs) ≈ 14.1 µV/√Hz), 2^17 samples;
// "line.wav" adds a 1234.5 Hz sine of 0.3 mV rms. float32, written by scipy.io.wavfile.write.
const WRITE = String.raw`
d = args[0]
rng = np.random.default_rng(21)
n = 1 << 17
t = np.arange(n) / 10000.0
x = 1e-3 * rng.standard_normal(n)
wavfile.write(d + "/quiet.wav", 10000, x.astype(np.float32))
y = x + 0.3e-3 * np.sqrt(2) * np.sin(2 * np.pi * 1234.5 * t)
wavfile.write(d + "/line.wav", 10000, y.astype(np.float32))
result = True
`;

// scipy.signal.welch (Hann, 4096, 50 %, detrend constant); cumulative = sqrt(cumsum(psd[1:])·df); the mask limit at
// each bin = exp(numpy.interp(log f, log f_mask, log L_mask)) inside the mask's span; margin 20·log10(L/asd).
const REFERENCE = String.raw`
path, mf, ml = args
r, x = wavfile.read(path)
f, p = signal.welch(x.astype(np.float64), fs=r, nperseg=4096)
df = f[1] - f[0]
cum = np.concatenate([[0.0], np.sqrt(np.cumsum(p[1:]) * df)])
mf = np.array(mf); ml = np.array(ml)
inside = (f >= mf[0]) & (f <= mf[-1]) & (f > 0)
lim = np.exp(np.interp(np.log(f[inside]), np.log(mf), np.log(ml)))
margin = 20 * np.log10(lim / np.sqrt(p[inside]))
k = int(np.argmin(margin))
result = {"limit": [float(v) if ok else None for v, ok in zip(np.exp(np.interp(np.log(np.maximum(f, 1e-30)), np.log(mf), np.log(ml))), inside)], "cum": cum.tolist(), "rms": float(np.sqrt(np.sum(p[1:]) * df)), "worst": float(margin[k]), "worstF": float(f[inside][k]), "bins": int(inside.sum())}
`;

const MASK_F = [10, 100, 1000, 4000];
const MASK_L = [1e-4, 4e-5, 3e-5, 3e-5];

interface Reference {
  limit: (number | null)[];
  cum: number[];
  rms: number;
  worst: number;
  worstF: number;
  bins: number;
}

beforeAll(async () => {
  py = new Python();
  dir = tempDir('measure-mask');
  await py.run(WRITE, dir);
  writeFileSync(
    join(dir, 'spec.csv'),
    ['# limit for the test rig', 'frequency,limit', ...MASK_F.map((f, i) => `${f},${MASK_L[i]}`)].join('\n') + '\n',
  );
  // The same mask in µV/√Hz with a unit column (the file is then analysed with --unit V).
  writeFileSync(
    join(dir, 'spec-uv.csv'),
    ['frequency,limit,unit', ...MASK_F.map((f, i) => `${f},${MASK_L[i] * 1e6},uV/√Hz`)].join('\r\n'),
  );
});
afterAll(() => py.close());

interface Report {
  channels: {
    unit: string;
    rms: number;
    cumulativeRms: number[];
    frequency: number[];
    mask: {
      pass: boolean;
      worstFrequency: number;
      worstMarginDb: number;
      bins: number;
      bands: { low: number; high: number; pass: boolean }[];
    };
  }[];
}

describe('analyze --cumulative', () => {
  it('is numpy.cumsum of the density, and its value at Nyquist is the total RMS to 1e-12', async () => {
    const path = join(dir, 'line.wav');
    const r = runCli('analyze', path, '--cumulative', '--json');
    expect(r.status).toBe(0);
    const ch = (JSON.parse(r.stdout) as Report).channels[0];
    const ref = await py.run<Reference>(REFERENCE, path, MASK_F, MASK_L);
    expect(ch.cumulativeRms.length).toBe(ch.frequency.length);
    expect(ch.cumulativeRms[0]).toBe(0); // DC is offset, not noise: left out as in the total RMS
    expect(Math.abs(ch.cumulativeRms[ch.cumulativeRms.length - 1] - ch.rms) / ch.rms).toBeLessThan(1e-12);
    expect(Math.abs(ch.rms - ref.rms) / ref.rms).toBeLessThan(1e-9); // numpy sqrt(sum(psd[1:])·df)
    let worst = 0;
    for (let k = 1; k < ref.cum.length; k++)
      worst = Math.max(worst, Math.abs(ch.cumulativeRms[k] - ref.cum[k]) / ref.cum[k]);
    expect(worst).toBeLessThan(1e-9);
    // The line's 0.3 mV rms shows as a step of √(rms_after² − rms_before²) across it (Parseval).
    const k0 = ch.frequency.findIndex((f) => f > 1220);
    const k1 = ch.frequency.findIndex((f) => f > 1250);
    const step = Math.sqrt(ch.cumulativeRms[k1] ** 2 - ch.cumulativeRms[k0] ** 2);
    expect(step / 0.3e-3).toBeGreaterThan(0.98);
    expect(step / 0.3e-3).toBeLessThan(1.03);
  });
});

describe('analyze --mask', () => {
  it('passes on a quiet file with the margin numpy.interp gives in log-log', async () => {
    const path = join(dir, 'quiet.wav');
    const r = runCli('analyze', path, '--mask', join(dir, 'spec.csv'), '--json');
    expect(r.status, r.stderr).toBe(0);
    const m = (JSON.parse(r.stdout) as Report).channels[0].mask;
    const ref = await py.run<Reference>(REFERENCE, path, MASK_F, MASK_L);
    expect(m.pass).toBe(true);
    expect(m.bins).toBe(ref.bins);
    expect(Math.abs(m.worstMarginDb - ref.worst)).toBeLessThan(1e-9);
    expect(m.worstFrequency).toBe(ref.worstF);
    expect(m.bands.every((b) => b.pass)).toBe(true);
  });

  it('fails at the line on a file with a line: exit 3, worst frequency within a bin of 1234.5 Hz, per-band verdicts', async () => {
    const path = join(dir, 'line.wav');
    const r = runCli('analyze', path, '--mask', join(dir, 'spec.csv'), '--json');
    expect(r.status).toBe(3);
    const m = (JSON.parse(r.stdout) as Report).channels[0].mask;
    const ref = await py.run<Reference>(REFERENCE, path, MASK_F, MASK_L);
    expect(m.pass).toBe(false);
    expect(Math.abs(m.worstFrequency - 1234.5)).toBeLessThan(10000 / 4096);
    expect(m.worstFrequency).toBe(ref.worstF);
    expect(Math.abs(m.worstMarginDb - ref.worst)).toBeLessThan(1e-9);
    expect(m.worstMarginDb).toBeLessThan(-3);
    const failing = m.bands.filter((b) => !b.pass);
    expect(failing.every((b) => b.low <= 1234.5 && b.high >= 1234.5)).toBe(true);
    expect(failing.length).toBeGreaterThan(0);
    const text = runCli('analyze', path, '--mask', join(dir, 'spec.csv'));
    expect(text.status).toBe(3);
    expect(text.stdout).toMatch(/mask, band 1000–[0-9.]+ Hz +FAIL, worst margin -[0-9.]+ dB at 123[0-9.]+ Hz/);
    expect(text.stdout).toMatch(/mask, band 100–1000 Hz +pass/);
  });

  it('reads a unit column with an SI prefix (µV/√Hz) against a channel given as volts by --unit V', () => {
    const a = JSON.parse(
      runCli('analyze', join(dir, 'line.wav'), '--mask', join(dir, 'spec.csv'), '--json').stdout,
    ) as Report;
    const r = runCli('analyze', join(dir, 'line.wav'), '--unit', 'V', '--mask', join(dir, 'spec-uv.csv'), '--json');
    expect(r.status).toBe(3);
    const b = JSON.parse(r.stdout) as Report;
    expect(b.channels[0].unit).toBe('V');
    expect(b.channels[0].mask.worstFrequency).toBe(a.channels[0].mask.worstFrequency);
    expect(Math.abs(b.channels[0].mask.worstMarginDb - a.channels[0].mask.worstMarginDb)).toBeLessThan(1e-9);
    // A mask in V/√Hz does not apply to a channel still in FS.
    const wrong = runCli('analyze', join(dir, 'line.wav'), '--mask', join(dir, 'spec-uv.csv'));
    expect(wrong.status).toBe(2);
    expect(wrong.stderr).toMatch(/limits are in V\/√Hz but channel ch0 is in FS\/√Hz/);
  });

  it('writes the limit at every bin in the CSV, equal to numpy.interp on log-log axes (no limit outside the mask)', async () => {
    const path = join(dir, 'quiet.wav');
    const r = runCli('analyze', path, '--mask', join(dir, 'spec.csv'), '--csv');
    expect(r.status).toBe(0);
    const rows = r.stdout.split('\n').filter((l) => l !== '' && !l.startsWith('#'));
    expect(rows[0].split(',').at(-1)).toBe('mask limit');
    const ref = await py.run<Reference>(REFERENCE, path, MASK_F, MASK_L);
    const limits = rows.slice(2).map((l) => l.split(',').at(-1)!);
    expect(limits.length).toBe(ref.limit.length);
    let worst = 0;
    for (let k = 0; k < limits.length; k++) {
      const want = ref.limit[k];
      if (want === null) expect(limits[k]).toBe('');
      else worst = Math.max(worst, Math.abs(Number(limits[k]) - want) / want);
    }
    expect(worst).toBeLessThan(1e-12);
  });

  const BAD: [string, string, RegExp][] = [
    [
      'non-monotonic',
      'frequency,limit\n10,1e-4\n100,4e-5\n50,3e-5\n',
      /line 4: frequency 50 Hz does not increase \(previous row 100 Hz\)/,
    ],
    ['negative', 'frequency,limit\n10,1e-4\n100,-4e-5\n', /line 3: limit -0.00004 is negative/],
    [
      'beyond Nyquist',
      'frequency,limit\n10,1e-4\n6000,4e-5\n',
      /line 3: frequency 6000 Hz is beyond the Nyquist frequency 5000 Hz/,
    ],
    ['bad header', 'freq,lim\n10,1e-4\n', /line 1: the header must be 'frequency,limit' or 'frequency,limit,unit'/],
    ['not a number', '# c\nfrequency,limit\n10,abc\n', /line 3: limit 'abc' is not a number/],
  ];
  for (const [what, text, message] of BAD) {
    it(`refuses a ${what} mask naming the line (exit 2)`, () => {
      const path = join(dir, `bad-${what.replace(/ /g, '-')}.csv`);
      writeFileSync(path, text);
      const r = runCli('analyze', join(dir, 'quiet.wav'), '--mask', path);
      expect(r.status).toBe(2);
      expect(r.stdout).toBe('');
      expect(r.stderr).toMatch(message);
    });
  }
});
