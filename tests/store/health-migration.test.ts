// Health counters (schema 3) in a store written by the previous schema: tests/fixtures/store-schema-2.sqlite was
// made by floorline at schema 2 (commit 01ab20f): a `floorline simulate` WAV of 20 s of white noise (4 kS/s, one
// channel) replayed into it, then one note. A report reads it as it is (saying the counters are not kept), a
// replay migrates it in place keeping every row, and the new run's counters are in the health table, read back
// with python's sqlite3, with the sample count scipy.io.wavfile reads from the replayed WAV.
import { copyFileSync, readFileSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { Python, root, tempDir } from '../wav/support.ts';
import { cliIn } from './support.ts';

const FIXTURE = join(root, 'tests/fixtures/store-schema-2.sqlite');
let py: Python;
let dir: string;
const floorline = cliIn(() => dir);

beforeAll(() => {
  py = new Python();
  dir = tempDir('health-migration');
});
afterAll(() => py.close());

const SCENARIO = {
  rate: 4000,
  format: 'int24',
  seed: 11,
  channels: [{ name: 'x', perCount: 1e-6, signals: [{ kind: 'white', density: 1e-6 }] }],
};

async function contents(file: string) {
  return py.run<{ version: number; tables: string[]; trend: number; spectra: number; notes: string[] }>(
    `import sqlite3
c = sqlite3.connect(args[0])
result = {"version": c.execute("pragma user_version").fetchone()[0],
  "tables": [r[0] for r in c.execute("select name from sqlite_schema where type = 'table' order by name")],
  "trend": c.execute("select count(*) from trend_1s where run = 1").fetchone()[0],
  "spectra": c.execute("select count(*) from spectra where run = 1").fetchone()[0],
  "notes": [r[0] for r in c.execute("select text from notes order by id")]}
c.close()`,
    file,
  );
}

describe('health counters in a store of schema 2', () => {
  it('a report reads it as it is; a replay migrates it, keeps its rows and counts its own run', async () => {
    const store = join(dir, 'old.sqlite');
    copyFileSync(FIXTURE, store);
    const before = await contents(store);
    expect(before.version).toBe(2);
    expect(before.tables).not.toContain('health');
    expect(before.trend).toBeGreaterThan(20);
    expect(before.notes).toEqual(['schema 2 note']);

    // A reader never migrates: the report says what it cannot know, and the file stays at schema 2.
    const old = floorline('report', '--store', store, '-o', 'old.html');
    expect(old.status, old.stderr).toBe(0);
    expect(readFileSync(join(dir, 'old.html'), 'utf8')).toContain('This store predates the health counters');
    expect((await contents(store)).version).toBe(2);

    writeFileSync(join(dir, 'sc.json'), JSON.stringify(SCENARIO));
    expect(floorline('simulate', 'sc.json', '--out', 'x.wav', '--duration', '5').status).toBe(0);
    // Retention counts back from the newest wall time, now, and the fixture's rows were written on 2026-12-03: under
    // the default retention its 1 s rows go 3 h after that. This checks the migration, so the replay keeps all.
    const keepAll = 'snap=36500d,1s=36500d,1m=36500d,1h=36500d,spectra=36500d';
    const r = floorline(
      'replay',
      'x.wav',
      '--speed',
      'max',
      '--no-server',
      '--quiet',
      '--data',
      'd',
      '--store',
      store,
      '--keep',
      keepAll,
    );
    expect(r.status, r.stderr).toBe(0);

    const after = await contents(store);
    expect(after.version).toBe(3);
    expect(after.tables).toContain('health');
    expect(after.trend).toBe(before.trend);
    expect(after.spectra).toBe(before.spectra);
    expect(after.notes).toEqual(before.notes);
    const health = await py.run<{ runs: number[]; samples: number; gaps: number; frames: number }>(
      `import sqlite3
c = sqlite3.connect(args[0])
runs = [r[0] for r in c.execute("select distinct run from health order by run")]
samples, gaps = c.execute("select samples, gaps from health where run = 2 order by k desc limit 1").fetchone()
fs, x = wavfile.read(args[1])
result = {"runs": runs, "samples": samples, "gaps": gaps, "frames": len(x)}
c.close()`,
      store,
      join(dir, 'x.wav'),
    );
    // Only the new run has counters; it delivered every frame of the WAV, without gaps.
    expect(health.runs).toEqual([2]);
    expect(health.frames).toBe(5 * 4000);
    expect(health.samples).toBe(health.frames);
    expect(health.gaps).toBe(0);

    const rep = floorline('report', '--store', store, '-o', 'new.html');
    expect(rep.status, rep.stderr).toBe(0);
    const html = readFileSync(join(dir, 'new.html'), 'utf8');
    expect(html).toMatch(/<tr><td class="n">2<\/td><td class="n">20000<\/td><td class="n">0<\/td>/);
    expect(html).toMatch(/<tr><th>total<\/th><td class="n">20000<\/td>/);
  }, 120_000);
});
