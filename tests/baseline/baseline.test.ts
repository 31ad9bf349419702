import { spawnSync } from 'node:child_process';
import { mkdtempSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { fileURLToPath } from 'node:url';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { readBaseline, type BaselineFile } from '../../agent/baseline/format.ts';

const root = fileURLToPath(new URL('../..', import.meta.url));
const dir = mkdtempSync(join(tmpdir(), 'floorline-baseline-'));
let ref: { psd: number[]; segments: number; band_100_1000_rms: number; drift_db: number };

function cli(...args: string[]): { status: number; stdout: string; stderr: string } {
  const r = spawnSync(process.execPath, [join(root, 'bin/floorline.mjs'), ...args], { encoding: 'utf8', cwd: dir });
  return { status: r.status ?? -1, stdout: r.stdout, stderr: r.stderr };
}

// dist/ (bin/floorline.mjs) is built once before the suite by tests/support/global-setup.ts.
beforeAll(() => {
  const r = spawnSync('python3', [join(root, 'tests/baseline/make-recordings.py'), dir], { encoding: 'utf8' });
  if (r.status !== 0) throw new Error(r.stderr);
  ref = JSON.parse(r.stdout);
}, 120_000);

afterAll(() => rmSync(dir, { recursive: true, force: true }));

describe('floorline baseline', () => {
  let b: BaselineFile;

  it('stores the mean density of the whole recording exactly as scipy.signal.welch computes it', async () => {
    const r = cli(
      'baseline',
      'quiet.wav',
      '-o',
      'quiet.json',
      '--segment',
      '1024',
      '--band',
      '100:1000',
      '--notes',
      'lid closed',
    );
    expect(r.status, r.stderr).toBe(0);
    b = await readBaseline(join(dir, 'quiet.json'));
    const psd = b.channels[0].psd;
    // Source: scipy.signal.welch(x, 4000, 'hann', 1024, 512, detrend='constant') on the float32 samples.
    let worst = 0;
    for (let k = 1; k < psd.length; k++) worst = Math.max(worst, Math.abs(psd[k] / ref.psd[k] - 1));
    expect(worst).toBeLessThan(1e-9);
    expect(b.channels[0].segments).toBe(ref.segments);
    // Band RMS sqrt(Σ psd·Δf) over 100 ≤ f ≤ 1000 Hz, numpy on the scipy density.
    expect(b.channels[0].bands[0].rms / ref.band_100_1000_rms).toBeCloseTo(1, 9);
    // Hann at 50 % overlap: K_eq = K / (1 + 2·(1 − 1/K)·ρ) with ρ = c², c = 0.167 the overlap correlation Heinzel
    // (2002, appendix C, Hanning) lists for 50 %, so K_eq ≈ K/1.056 for large K (Welch 1967).
    expect(b.channels[0].equivalentAverages / ref.segments).toBeCloseTo(1 / (1 + 2 * 0.02778), 2);
    expect(b.notes).toBe('lid closed');
    expect(b.span).toEqual({ firstSample: 0, lastSample: 159_999, seconds: 40 });
    expect(b.settling.settled).toBe(true);
  });

  it('warns, and records in the file, when the floor drifted by 1 dB between the halves of the capture', async () => {
    const r = cli('baseline', 'drift.wav', '-o', 'drift.json', '--segment', '1024');
    expect(r.status).toBe(0);
    expect(r.stderr).toMatch(/11\.72–1996 Hz drifted \d\.\d\d dB between the halves/);
    const d = await readBaseline(join(dir, 'drift.json'));
    expect(d.settling.settled).toBe(false);
    const whole = d.settling.bands.find((x) => x.low < 20 && x.high > 1900)!;
    // Source: scipy.signal.welch of each half (this noise realisation gives 0.91 dB for the 1 dB step).
    expect(whole.driftDb).toBeCloseTo(ref.drift_db, 6);
    expect(whole.driftDb).toBeGreaterThan(whole.upperDb);
  });

  it('refuses to compare against a baseline taken with another segment length, naming the setting', () => {
    const r = cli(
      'replay',
      'tone.wav',
      '--baseline',
      'quiet.json',
      '--segment',
      '4096',
      '--speed',
      'max',
      '--no-server',
      '--quiet',
      '--data',
      'data',
    );
    expect(r.status).toBe(2);
    expect(r.stderr).toMatch(/segment \(1024 vs 4096\)/);
  });

  it('refuses a baseline file whose settings were edited after capture', async () => {
    const text = readFileSync(join(dir, 'quiet.json'), 'utf8').replace('"overlap": 0.5', '"overlap": 0.75');
    writeFileSync(join(dir, 'edited.json'), text);
    await expect(readBaseline(join(dir, 'edited.json'))).rejects.toThrow(/settingsHash .* does not match/);
  });

  it('replay with the baseline reports the new line with its sample and the same events at any speed', () => {
    const a = cli(
      'replay',
      'tone.wav',
      '--baseline',
      'quiet.json',
      '--segment',
      '1024',
      '--speed',
      'max',
      '--no-server',
      '--quiet',
      '--data',
      'd1',
      '--events-out',
      'a.jsonl',
    );
    const c = cli(
      'replay',
      'tone.wav',
      '--baseline',
      'quiet.json',
      '--segment',
      '1024',
      '--speed',
      '40',
      '--no-server',
      '--quiet',
      '--data',
      'd2',
      '--events-out',
      'c.jsonl',
    );
    expect(a.status, a.stderr).toBe(0);
    expect(c.status, c.stderr).toBe(0);
    const ea = readFileSync(join(dir, 'a.jsonl'), 'utf8')
      .trim()
      .split('\n')
      .map((l) => JSON.parse(l));
    const ec = readFileSync(join(dir, 'c.jsonl'), 'utf8')
      .trim()
      .split('\n')
      .map((l) => JSON.parse(l));
    const strip = (e: Record<string, unknown>) => ({ ...e, capture: undefined });
    expect(ea.map(strip)).toEqual(ec.map(strip));
    const spur = ea.find((e) => e.rule === 'spur');
    expect(spur.state).toBe('raised');
    expect(Math.abs(spur.frequency - 700.3)).toBeLessThan(1);
    expect(spur.sample).toBeGreaterThan(80_000); // the line starts at t = 20 s = sample 80 000
    expect(spur.sample).toBeLessThan(80_000 + 3 * 4000);
    expect(spur.t).toBeCloseTo(spur.sample / 4000, 9);
    // The data folder's events.jsonl holds the same records as --events-out.
    expect(readFileSync(join(dir, 'd1/events.jsonl'), 'utf8')).toBe(readFileSync(join(dir, 'a.jsonl'), 'utf8'));
  });
});
