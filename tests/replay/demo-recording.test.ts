// The bundled demo recording: it is what its committed scenario makes, its scripted events are in the samples
// (checked with numpy/scipy.signal.welch), and `floorline demo` raises the matching alarms at those times.
import { spawnSync } from 'node:child_process';
import { readFileSync } from 'node:fs';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { Python, root, tempDir } from '../wav/support.ts';

const bin = join(root, 'bin/floorline.mjs');
const demo = join(root, 'recordings/demo.wav');
const RATE = 8000;
let dir: string;
let py: Python;

beforeAll(() => {
  dir = tempDir('demo');
  py = new Python();
});
afterAll(() => py.close());

describe('demo recording', () => {
  it('is what `floorline simulate recordings/demo-scenario.json` makes, sample for sample', async () => {
    const out = join(dir, 'again.wav');
    const r = spawnSync(
      process.execPath,
      [bin, 'simulate', join(root, 'recordings/demo-scenario.json'), '--out', out],
      { encoding: 'utf8' },
    );
    expect(r.status, r.stderr).toBe(0);
    const same = await py.run<boolean>(
      `a = wavfile.read(args[0]); b = wavfile.read(args[1]); result = bool(a[0] == b[0] and np.array_equal(a[1], b[1]))`,
      demo,
      out,
    );
    expect(same).toBe(true);
  });

  it('has the baseline `floorline baseline` makes from it with the command in recordings/README.md', () => {
    const committed = JSON.parse(readFileSync(join(root, 'recordings/demo-baseline.json'), 'utf8'));
    const out = join(dir, 'demo-baseline.json');
    const r = spawnSync(
      process.execPath,
      [bin, 'baseline', 'recordings/demo.wav', '-o', out, '--seconds', '18', '--notes', committed.notes],
      {
        cwd: root,
        encoding: 'utf8',
      },
    );
    expect(r.status, r.stderr).toBe(0);
    const again = JSON.parse(readFileSync(out, 'utf8'));
    // Everything but the creation time is what the command gives now: settings and their hash, span, segments,
    // settling verdict, notes exactly; densities and band RMS to 1e-12 relative (float64 sums, the same on any
    // machine up to the last bits of Math.sin/cos in the window and FFT tables).
    const close = (a: unknown, b: unknown, path: string): void => {
      if (typeof a === 'number' && typeof b === 'number') {
        expect(Math.abs(a - b), path).toBeLessThanOrEqual(1e-12 * Math.max(Math.abs(a), Math.abs(b)));
      } else if (Array.isArray(a) && Array.isArray(b)) {
        expect(b.length, path).toBe(a.length);
        a.forEach((v, i) => close(v, b[i], `${path}[${i}]`));
      } else if (a !== null && b !== null && typeof a === 'object' && typeof b === 'object') {
        expect(Object.keys(b).sort(), path).toEqual(Object.keys(a).sort());
        for (const k of Object.keys(a))
          close((a as Record<string, unknown>)[k], (b as Record<string, unknown>)[k], `${path}.${k}`);
      } else {
        expect(b, path).toEqual(a);
      }
    };
    delete committed.createdWallTime;
    delete again.createdWallTime;
    close(committed, again, 'demo-baseline.json');
  });

  it('holds the scripted events of recordings/README.md, as numpy and scipy.signal.welch see them', async () => {
    const m = await py.run<Record<string, number>>(
      `fs, x = wavfile.read(args[0]); x = x.astype(np.float64)
def spec(c, a, b):
    return signal.welch(x[int(a * fs):int(b * fs), c], fs=fs, nperseg=4096)
def line_rms(c, a, b, f0):
    # RMS of a line: band power within ±4 bins minus the local floor (median density) over the same width
    f, p = spec(c, a, b); df = f[1]
    k = np.abs(f - f0) <= 4 * df
    floor = np.median(p[(np.abs(f - f0) > 10 * df) & (np.abs(f - f0) < 60 * df)])
    return float(np.sqrt(max(np.sum(p[k] - floor) * df, 0.0)))
def median_asd(c, a, b, lo, hi):
    f, p = spec(c, a, b)
    return float(np.sqrt(np.median(p[(f >= lo) & (f <= hi)])))
def mean_asd(c, a, b, lo, hi):
    f, p = spec(c, a, b)
    return float(np.sqrt(np.mean(p[(f >= lo) & (f <= hi)])))
fsv = 8388607 * 2.98e-7
clip = np.nonzero(np.abs(x[:, 0]) >= 0.999 * fsv)[0]
result = {
  "mainsBefore": line_rms(0, 2, 19.5, 50), "mainsAfter": line_rms(0, 21, 37, 50), "h3After": line_rms(0, 21, 37, 150),
  "spurBefore": line_rms(1, 2, 29.5, 1953.3), "spurAfter": line_rms(1, 31, 60, 1953.3),
  "floorQuiet": median_asd(0, 2, 19.5, 400, 1100), "floorRise": median_asd(0, 38.5, 45.5, 400, 1100), "floorAfter": median_asd(0, 46.5, 51.5, 400, 1100),
  "at1kHz": mean_asd(0, 0, 18, 900, 1100),
  "clipFirst": float(clip[0]) if len(clip) else -1.0, "clipLast": float(clip[-1]) if len(clip) else -1.0, "clipCount": float(len(clip)),
}`,
      demo,
    );
    // Mains 50 Hz at 48.5 µV rms at the converter from t = 20 s only (third harmonic 19.4 µV); within 20 %: the
    // estimate has ~40 averages.
    expect(m.mainsBefore).toBeLessThan(4.85e-6);
    expect(m.mainsAfter).toBeGreaterThan(38.8e-6);
    expect(m.mainsAfter).toBeLessThan(58.2e-6);
    expect(m.h3After).toBeGreaterThan(15.5e-6);
    expect(m.h3After).toBeLessThan(23.3e-6);
    // Switching spur 0.6 µV rms on the board's shorted input from t = 30 s.
    expect(m.spurBefore).toBeLessThan(0.1e-6);
    expect(m.spurAfter).toBeGreaterThan(0.48e-6);
    expect(m.spurAfter).toBeLessThan(0.72e-6);
    // Bridge floor at the converter: √(239.2² + 600² + 7² + 15²) = 646 nV/√Hz; from 38 to 46 s 2.1 µV/√Hz is added in
    // 300–1200 Hz: √(646² + 2100²) = 2.20 µV/√Hz. (median of a χ² density is below its mean by ~1 − 2/(9ν) for
    // ν = 2·K: small here; ±15 % covers it)
    expect(m.floorQuiet).toBeGreaterThan(549e-9);
    expect(m.floorQuiet).toBeLessThan(743e-9);
    expect(m.floorRise).toBeGreaterThan(1.87e-6);
    expect(m.floorRise).toBeLessThan(2.53e-6);
    expect(m.floorAfter).toBeLessThan(743e-9);
    // Input-referred at 1 kHz (÷ the gain of 100) against the budget from physics, in quadrature: Johnson noise of
    // the 350 Ω bridge at 296 K √(4kTR) (Nyquist 1928, k exact by the 2019 SI), the amplifier's 6 nV/√Hz and
    // 0.2 pA/√Hz × 350 Ω, and one LSB's quantisation q/√(6·fs) ÷ 100 (common practice): within ±1 dB.
    const k = 1.380649e-23;
    const budget = Math.sqrt(
      4 * k * 296 * 350 + 6e-9 ** 2 + (0.2e-12 * 350) ** 2 + (2.98e-7 / Math.sqrt(6 * RATE) / 100) ** 2,
    );
    expect(Math.abs(20 * Math.log10(m.at1kHz / 100 / budget))).toBeLessThan(1);
    // Clipped samples (|x| ≥ 0.999 FS) only inside the overload at 52.0–52.1 s.
    expect(m.clipCount).toBeGreaterThan(0);
    expect(m.clipFirst).toBeGreaterThanOrEqual(52 * RATE);
    expect(m.clipLast).toBeLessThan(52.1 * RATE);
  });

  it('analyze --input-referred on the quiet span lands on the budget its metadata records, within ±1 dB at 1 kHz', () => {
    const r = spawnSync(process.execPath, [bin, 'analyze', demo, '--input-referred', '--to', '18', '--json'], {
      encoding: 'utf8',
      maxBuffer: 64 << 20,
    });
    expect(r.status, r.stderr).toBe(0);
    const ch = JSON.parse(r.stdout).channels[0];
    expect(ch.gain).toBe(100);
    expect(ch.referredTo).toBe('input');
    // The budget terms: √(4kTR) for 350 Ω at 296 K (k = 1.380649e-23 J/K), 6 nV/√Hz, 0.2 pA/√Hz × 350 Ω.
    expect(ch.budget.parts[0].density).toBeCloseTo(Math.sqrt(4 * 1.380649e-23 * 296 * 350), 15);
    expect(ch.budget.parts[1].density).toBe(6e-9);
    expect(ch.budget.parts[2].density).toBeCloseTo(0.2e-12 * 350, 18);
    expect(Math.abs(ch.budget.differenceDb)).toBeLessThan(1);
  });

  it('`floorline demo` raises mains, spur, band-rise and clip alarms after their scripted times', () => {
    const data = join(dir, 'data');
    const r = spawnSync(
      process.execPath,
      [bin, 'demo', '--speed', 'max', '--no-loop', '--no-server', '--quiet', '--data', data],
      { encoding: 'utf8', timeout: 120_000 },
    );
    expect(r.status, r.stderr).toBe(0);
    const events = readFileSync(join(data, 'events.jsonl'), 'utf8')
      .trim()
      .split('\n')
      .map((l) => JSON.parse(l));
    const first = (rule: string, channel: string) =>
      events.find((e) => e.rule === rule && e.channel === channel && e.state === 'raised');
    const mains = first('mains', 'bridge');
    const spur = first('spur', 'shorted');
    const rise = first('band-rise', 'bridge');
    const clip = first('clip', 'bridge');
    // Scripted times (recordings/README.md): mains 20 s, spur 30 s, floor rise 38–46 s, clip 52.0–52.1 s.
    expect(mains.t).toBeGreaterThanOrEqual(20);
    expect(mains.t).toBeLessThan(25);
    expect(spur.t).toBeGreaterThanOrEqual(30);
    expect(spur.t).toBeLessThan(35);
    expect(Math.abs(spur.frequency - 1953.3)).toBeLessThan(RATE / 4096);
    expect(rise.t).toBeGreaterThanOrEqual(38);
    expect(rise.t).toBeLessThan(47);
    expect(clip.sample).toBeGreaterThanOrEqual(52 * RATE);
    expect(clip.sample).toBeLessThan(52.1 * RATE);
    // Nothing is raised during the quiet start the baseline was taken from.
    expect(events.filter((e) => e.state === 'raised' && e.t < 20)).toEqual([]);
  });
});
