// Kept spectra (schema 2): the log-grid reduction against numpy, the migration of a store written by the previous
// schema (tests/fixtures/store-schema-1.sqlite, made by floorline at schema 1: a 20 s replay and one note), the
// rows a replay keeps, read back with python's sqlite3 and numpy, and /api/spectra, /api/spectrum behind the token.
import { copyFileSync, statSync } from 'node:fs';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { Python, root, tempDir } from '../wav/support.ts';
import { cliIn } from './support.ts';
import { startAgent, type Agent } from '../browser/support/agent.ts';
import { reduceToLogGrid } from '../../dsp/log-grid.ts';
import { openStoreForReading, openStoreForWriting } from '../../agent/store/open-store.ts';
import { SCHEMA_VERSION } from '../../agent/store/schema.ts';
import { queryTrend } from '../../agent/store/trend-query.ts';
import { nearestSpectrum, querySpectra } from '../../agent/store/spectra-query.ts';
import { parseTimeBound } from '../../agent/store/time-bound.ts';
import { SPECTRUM_EVERY_SECONDS, SPECTRUM_POINTS } from '../../agent/store/spectrum-sampler.ts';

const FIXTURE = join(root, 'tests/fixtures/store-schema-1.sqlite');
const RATE = 4000;
const SIGMA = 1e-4;
let py: Python;
let dir: string;

beforeAll(() => {
  py = new Python();
  dir = tempDir('spectra');
});
afterAll(() => py.close());

describe('log-grid reduction', () => {
  it('equals a numpy implementation of its rule: largest bin density per log cell, nearest bin when the cell is narrower', async () => {
    const bins = 2049;
    const binHz = 8000 / 4096;
    const psd = new Float64Array(bins);
    for (let k = 0; k < bins; k++) psd[k] = 1e-12 * (1 + ((k * 7919) % 101) / 10);
    const fLow = binHz;
    const fHigh = (bins - 1) * binHz;
    const ours = reduceToLogGrid(psd, binHz, fLow, fHigh, new Float64Array(256));
    // Reference: numpy, from the rule as written in dsp/log-grid.ts (cells between geometric midpoints).
    const ref = await py.run<number[]>(
      `psd = np.array(args[0]); binHz, fLow, fHigh, n = args[1:]
f = fLow * (fHigh / fLow) ** (np.arange(n) / (n - 1))
half = np.sqrt((fHigh / fLow) ** (1 / (n - 1)))
centres = np.arange(len(psd)) * binHz
out = []
for fj in f:
    inside = np.nonzero((centres >= fj / half * (1 - 1e-12)) & (centres < fj * half * (1 - 1e-12)) & (np.arange(len(psd)) > 0))[0]
    out.append(float(psd[inside].max()) if len(inside) else float(psd[max(1, min(len(psd) - 1, int(np.floor(fj / binHz + 0.5))))]))
result = out`,
      Array.from(psd),
      binHz,
      fLow,
      fHigh,
      256,
    );
    expect(Array.from(ours)).toEqual(ref);
  });

  it('keeps a narrow line at its full height in the cell that holds its bin (the reason for the max rule)', () => {
    const binHz = 1;
    const psd = new Float64Array(4097).fill(1e-14);
    psd[50] = 1e-9; // a mains line at 50 Hz, 50 dB over the floor
    const out = reduceToLogGrid(psd, binHz, 1, 4096, new Float32Array(256));
    const j = Math.round((Math.log(50) / Math.log(4096)) * 255);
    expect(Math.max(...out)).toBeCloseTo(1e-9, 15);
    expect([j - 1, j, j + 1].some((x) => out[x] > 1e-10)).toBe(true);
    expect(out.filter((v) => v > 1e-10).length).toBe(1);
  });
});

describe('a store written by the previous schema', () => {
  it('is migrated in place on open: its runs, trend rows and notes are kept, the spectra table is added', async () => {
    const file = join(dir, 'old.sqlite');
    copyFileSync(FIXTURE, file);
    // What the old file holds, read by python's sqlite3 (not by our code).
    const before = await py.run<{ version: number; powers: number[]; notes: string[] }>(
      `import sqlite3
c = sqlite3.connect(args[0])
result = {"version": c.execute("pragma user_version").fetchone()[0],
  "powers": [r[0] for r in c.execute("select t.power from trend_1s t join series s on s.id = t.series where s.quantity in ('bandRms', 'floorDensity') order by s.id, t.k")],
  "notes": [r[0] for r in c.execute("select text from notes")]}
c.close()`,
      file,
    );
    expect(before.version).toBe(1);
    expect(before.powers.length).toBeGreaterThan(20);
    // A reader of version 1 still answers trend queries; the spectra query says there are none yet.
    const old = openStoreForReading(file);
    expect(queryTrend(old, { every: '1s' }).series.length).toBeGreaterThan(0);
    expect(() => querySpectra(old, { rows: 10 })).toThrow(/keeps no spectra yet \(schema 1\)/);
    old.close();
    const db = openStoreForWriting(file, () => {});
    expect(db.pragma('user_version', { simple: true })).toBe(SCHEMA_VERSION);
    expect(SCHEMA_VERSION).toBe(3);
    // The same rows, series by series (id order), as the mean power behind each row's RMS.
    const got = queryTrend(db, { every: '1s' }).series.flatMap((s) =>
      s.rows.filter((r) => !r.gap).map((r) => r.mean! * r.mean!),
    );
    expect(got.length).toBe(before.powers.length);
    got.forEach((power, i) => expect(power / before.powers[i]).toBeCloseTo(1, 12));
    expect((db.prepare('SELECT text FROM notes').all() as { text: string }[]).map((n) => n.text)).toEqual(before.notes);
    expect((db.prepare('SELECT count(*) AS n FROM spectra').get() as { n: number }).n).toBe(0);
    db.close();
  });
});

describe('spectra kept by a replay into the migrated store', () => {
  let store: string;
  beforeAll(async () => {
    store = join(dir, 'kept.sqlite');
    copyFileSync(FIXTURE, store);
    const wav = join(dir, 'noise.wav');
    await py.run(
      `rng = np.random.default_rng(3)
wavfile.write(args[0], args[1], (args[2] * rng.standard_normal((60 * args[1], 2))).astype(np.float32))`,
      wav,
      RATE,
      SIGMA,
    );
    const r = cliIn(() => dir)(
      'replay',
      wav,
      '--speed',
      'max',
      '--no-server',
      '--quiet',
      '--data',
      join(dir, 'data'),
      '--store',
      store,
      '--segment',
      '1024',
    );
    expect(r.status, r.stderr).toBe(0);
  }, 120_000);

  it('keeps one spectrum per channel every few seconds of sample time, SPECTRUM_POINTS float32 values each', async () => {
    const kept = await py.run<{ n: number; bytes: number[]; channels: string[]; samples: number[] }>(
      `import sqlite3
c = sqlite3.connect(args[0])
result = {"n": c.execute("select count(*) from spectra").fetchone()[0],
  "bytes": sorted({r[0] for r in c.execute("select length(density) from spectra")}),
  "channels": [r[0] for r in c.execute("select distinct channel from spectra order by channel")],
  "samples": [r[0] for r in c.execute("select sample from spectra where channel = 'ch0' order by sample")]}`,
      store,
    );
    expect(kept.channels).toEqual(['ch0', 'ch1']);
    expect(kept.bytes).toEqual([SPECTRUM_POINTS * 4]);
    // 60 s of sample time at one per SPECTRUM_EVERY_SECONDS (the first at the run's first snapshot).
    expect(kept.samples.length).toBe(Math.ceil(60 / SPECTRUM_EVERY_SECONDS));
    const steps = kept.samples.slice(1).map((s, i) => s - kept.samples[i]);
    for (const s of steps) expect(s).toBeGreaterThanOrEqual(SPECTRUM_EVERY_SECONDS * RATE);
    for (const s of steps) expect(s).toBeLessThan((SPECTRUM_EVERY_SECONDS + 0.2) * RATE);
  });

  it('a kept spectrum reads back as stored (numpy float32 decoding) and holds the white-noise density 2σ²/fs', async () => {
    const db = openStoreForReading(store);
    const s = nearestSpectrum(db, parseTimeBound('t=30'), 'ch0');
    db.close();
    expect(Math.abs(s.t - 30)).toBeLessThanOrEqual(SPECTRUM_EVERY_SECONDS / 2 + 0.2);
    expect(s.settings.segment).toBe(1024);
    expect(s.fLow).toBeCloseTo(RATE / 1024, 12);
    expect(s.fHigh).toBeCloseTo(RATE / 2, 12);
    const blob = await py.run<number[]>(
      `import sqlite3
c = sqlite3.connect(args[0])
b = c.execute("select density from spectra where channel = 'ch0' and sample = ?", (args[1],)).fetchone()[0]
result = [float(x) for x in np.frombuffer(b, dtype="<f4")]`,
      store,
      s.sample,
    );
    expect(s.density.length).toBe(blob.length);
    s.density.forEach((v, j) => expect(v).toBeCloseTo(blob[j], 18));
    // White noise of RMS σ sampled at fs has the one-sided density 2σ²/fs (scipy.signal.welch 'density'
    // convention); single-bin cells (the low half of the grid) scatter around it, by far less than ±30 % after
    // tens of averaged segments.
    const lowHalf = s.density.slice(20, SPECTRUM_POINTS / 2).sort((a, b) => a - b);
    const median = lowHalf[lowHalf.length >> 1];
    expect(median / ((2 * SIGMA * SIGMA) / RATE)).toBeGreaterThan(0.7);
    expect(median / ((2 * SIGMA * SIGMA) / RATE)).toBeLessThan(1.3);
  });

  it('the spectra of a span come oldest first, merged by pointwise max down to the rows asked for', () => {
    const db = openStoreForReading(store);
    const all = querySpectra(db, { channel: 'ch1', rows: 1000 });
    const few = querySpectra(db, { channel: 'ch1', rows: 4 });
    const span = querySpectra(db, {
      channel: 'ch1',
      from: parseTimeBound('t=20'),
      to: parseTimeBound('t=40'),
      rows: 1000,
    });
    db.close();
    expect(all.merged).toBe(1);
    expect(all.rows.length).toBe(12);
    expect(few.rows.length).toBeLessThanOrEqual(4);
    expect(few.rows[few.rows.length - 1].sample).toBe(all.rows[all.rows.length - 1].sample);
    for (const r of span.rows) expect(r.t).toBeGreaterThanOrEqual(20);
    for (const r of span.rows) expect(r.t).toBeLessThanOrEqual(40);
    const t = all.rows.map((r) => r.t);
    expect([...t].sort((a, b) => a - b)).toEqual(t);
    // The newest merged row is the pointwise max of the stored rows it stands for.
    const group = all.rows.slice(-few.merged);
    const last = few.rows[few.rows.length - 1];
    last.density.forEach((v, j) => expect(v).toBe(Math.max(...group.map((g) => g.density[j]))));
  });

  it('the store grows by about SPECTRUM_POINTS × 4 bytes per kept spectrum (the size per day in README)', () => {
    // 12 rows × 2 channels × 1 KiB over the fixture's size; pages and the B-tree add a little.
    const grown = statSync(store).size - statSync(FIXTURE).size;
    expect(grown).toBeGreaterThan(24 * SPECTRUM_POINTS * 4);
  });
});

describe('/api/spectra and /api/spectrum on a running agent', () => {
  const TOKEN = 'spectra-api-test-token-42';
  let agent: Agent;
  let base: string;

  beforeAll(async () => {
    const wav = join(dir, 'live.wav');
    await py.run(
      `rng = np.random.default_rng(9)
wavfile.write(args[0], args[1], (args[2] * rng.standard_normal((20 * args[1], 1))).astype(np.float32))`,
      wav,
      RATE,
      SIGMA,
    );
    agent = await startAgent([
      'replay',
      wav,
      '--speed',
      '8',
      '--loop',
      '--store',
      join(dir, 'live.sqlite'),
      '--http-port',
      '0',
      '--token',
      TOKEN,
      '--data',
      join(dir, 'live-data'),
      '--segment',
      '512',
    ]);
    base = agent.url.replace(/\/$/, '');
    // Wait for three kept spectra (15 s of sample time, about 2 s at 8×).
    for (let i = 0; i < 120; i++) {
      const r = await fetch(`${base}/api/spectra`, { headers: { authorization: `Bearer ${TOKEN}` } });
      if (r.ok && ((await r.json()) as { rows: unknown[] }).rows.length >= 3) break;
      await new Promise((res) => setTimeout(res, 250));
    }
  }, 60_000);

  afterAll(() => agent?.stop());

  const get = (path: string, headers: Record<string, string> = { authorization: `Bearer ${TOKEN}` }) =>
    fetch(base + path, { headers });

  it('refuses requests without the token or from another origin (the checks of /api/trend)', async () => {
    expect((await get('/api/spectra', {})).status).toBe(401);
    expect((await get('/api/spectrum?at=t=1', {})).status).toBe(401);
    const foreign = { authorization: `Bearer ${TOKEN}`, origin: 'http://elsewhere.example' };
    expect((await get('/api/spectra', foreign)).status).toBe(403);
  });

  it('serves rows and the nearest spectrum; bad parameters get 400 naming the parameter', async () => {
    const rows = (await (await get('/api/spectra?channel=ch0&rows=2')).json()) as { rows: { t: number }[] };
    expect(rows.rows.length).toBeGreaterThan(0);
    expect(rows.rows.length).toBeLessThanOrEqual(2);
    const one = (await (await get('/api/spectrum?channel=ch0&at=t=5')).json()) as {
      t: number;
      density: number[];
      settings: { segment: number };
    };
    expect(one.density.length).toBe(SPECTRUM_POINTS);
    expect(one.settings.segment).toBe(512);
    expect(Math.abs(one.t - 5)).toBeLessThanOrEqual(SPECTRUM_EVERY_SECONDS);
    const cases: [string, RegExp][] = [
      ['/api/spectra?rows=0', /'rows' must be an integer from 1 to 2000/],
      ['/api/spectrum', /'at' is required/],
      ['/api/spectrum?at=noon', /'at': 'noon' is not a time/],
      [`/api/spectra?channel=${encodeURIComponent("ch0' --")}`, /no spectra of channel 'ch0' --'/],
    ];
    for (const [path, message] of cases) {
      const r = await get(path);
      expect(r.status, path).toBe(400);
      expect(((await r.json()) as { error: { message: string } }).error.message).toMatch(message);
    }
  });
});
