// A replay keeps its history apart from the rig's: without --store it writes a store of its own under
// DATA/replays/, and the rig's DATA/floorline.sqlite is left byte for byte as it was (python's hashlib), while the
// replay's own file opens in python's sqlite3 with the replayed file's run and rows.
import { readdirSync } from 'node:fs';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { Python, tempDir } from '../wav/support.ts';
import { cliIn } from './support.ts';

const RATE = 4000;
let dir: string;
let py: Python;
const floorline = cliIn(() => dir);

const sha256 = (file: string) =>
  py.run<string>(`import hashlib\nresult = hashlib.sha256(open(args[0], 'rb').read()).hexdigest()`, file);

beforeAll(async () => {
  dir = tempDir('store-replay-own');
  py = new Python();
  // Invented test data: 10 s of white noise, one channel, float32 WAV written by scipy.
  await py.run(
    `rng = np.random.default_rng(5)
wavfile.write(args[0], args[1], (1e-3 * rng.standard_normal(10 * args[1])).astype(np.float32))`,
    join(dir, 'noise.wav'),
    RATE,
  );
}, 60_000);

afterAll(() => py?.close());

describe('replay without --store', () => {
  it("writes DATA/replays/…sqlite and leaves the rig's DATA/floorline.sqlite untouched", async () => {
    const data = join(dir, 'data');
    const rig = join(data, 'floorline.sqlite');
    const replay = (...extra: string[]) =>
      floorline('replay', 'noise.wav', '--speed', 'max', '--no-server', '--quiet', '--data', data, ...extra);
    // The rig's history: here a replay told to write there, standing in for a live run's store.
    const first = replay('--store', rig, '--segment', '1024');
    expect(first.status, first.stderr).toBe(0);
    const before = await sha256(rig);

    const second = replay('--segment', '1024');
    expect(second.status, second.stderr).toBe(0);
    expect(await sha256(rig)).toBe(before);

    const own = readdirSync(join(data, 'replays')).filter((f) => f.endsWith('.sqlite'));
    expect(own.length).toBe(1);
    const kept = await py.run<{ ok: string; runs: [string, number][]; rows: number }>(
      `import sqlite3
c = sqlite3.connect(args[0])
result = {"ok": c.execute('pragma integrity_check').fetchone()[0],
  "runs": [list(r) for r in c.execute('select source, sample_rate from runs')],
  "rows": c.execute('select count(*) from trend_1s').fetchone()[0]}`,
      join(data, 'replays', own[0]),
    );
    expect(kept.ok).toBe('ok');
    expect(kept.runs.length).toBe(1);
    expect(kept.runs[0][0]).toContain('noise.wav');
    expect(kept.runs[0][1]).toBe(RATE);
    expect(kept.rows).toBeGreaterThan(0);
    // The rig's store (with any WAL, as python's sqlite3 reads it) still holds just the one run it had.
    const runs = await py.run<number>(
      `import sqlite3\nresult = sqlite3.connect(args[0]).execute('select count(*) from runs').fetchone()[0]`,
      rig,
    );
    expect(runs).toBe(1);
  });
});
