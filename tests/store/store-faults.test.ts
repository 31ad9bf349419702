// The history store under faults, on real files: kill -9 and restart, a second agent on the same store, a
// corrupt or foreign file, hostile note text, a full disk.
import { spawn, spawnSync, type ChildProcess } from 'node:child_process';
import { existsSync, mkdirSync, readdirSync, readFileSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { afterAll, afterEach, beforeAll, describe, expect, it } from 'vitest';
import { Python, root, tempDir } from '../wav/support.ts';
import { mountSmallDisk, releaseSmallDisks, ownProcess } from '../support/small-disk.ts';

const RATE = 4000;
const bin = join(root, 'bin/floorline.mjs');
let dir: string;
let py: Python;
let wav: string;
let longWav: string;

function floorline(...args: string[]) {
  return spawnSync(process.execPath, [bin, ...args], { encoding: 'utf8', cwd: dir, timeout: 120_000 });
}

/** Starts a replay in real time, looping; resolves once its stdout matched `until` (returns the match). */
function startAgent(
  args: string[],
  until: RegExp,
): Promise<{ child: ChildProcess; match: RegExpMatchArray; out: () => string; err: () => string }> {
  const child = spawn(process.execPath, [bin, 'replay', wav, '--speed', '1', '--loop', ...args], {
    stdio: ['ignore', 'pipe', 'pipe'],
    cwd: dir,
  });
  let out = '';
  let err = '';
  child.stderr!.setEncoding('utf8').on('data', (t: string) => (err += t));
  return new Promise((resolve, reject) => {
    const timer = setTimeout(
      () => reject(new Error(`agent did not print ${until} within 20 s: ${out} ${err}`)),
      20_000,
    );
    child.stdout!.setEncoding('utf8').on('data', (t: string) => {
      out += t;
      const m = until.exec(out);
      if (m) {
        clearTimeout(timer);
        resolve({ child, match: m, out: () => out, err: () => err });
      }
    });
  });
}

const exited = (c: ChildProcess) => new Promise((r) => (c.exitCode !== null ? r(c.exitCode) : c.once('exit', r)));

beforeAll(async () => {
  dir = tempDir('store-faults');
  py = new Python();
  wav = join(dir, 'short.wav');
  longWav = join(dir, 'long.wav');
  await py.run(
    `rng = np.random.default_rng(3)
wavfile.write(args[0], args[1], (1e-3 * rng.standard_normal((4 * args[1], 2))).astype(np.float32))
wavfile.write(args[2], args[1], (1e-3 * rng.standard_normal((600 * args[1], 4))).astype(np.float32))`,
    wav,
    RATE,
    longWav,
  );
}, 60_000);

afterAll(() => py.close());

afterEach(releaseSmallDisks);

describe('history store durability', () => {
  it('kill -9: the store opens, at most the last second is missing, and a restart continues the series after a gap', async () => {
    const store = join(dir, 'killed.sqlite');
    const a = await startAgent(
      ['--no-server', '--store', store, '--status-every', '0.2', '--segment', '512', '--band', '20:1900'],
      /sample (\d+)[\s\S]*sample (\d+)[\s\S]*sample (\d+)[\s\S]*sample ([3-9]\d{4})/,
    );
    const seen = Number(a.match[4]);
    a.child.kill('SIGKILL');
    await exited(a.child);
    // python's sqlite3 on the file the crash left: intact, and the snapshot-rate rows reach within 1 s of the last
    // sample the agent reported.
    const after = await py.run<{ ok: string; last: number }>(
      `import sqlite3
db = sqlite3.connect(args[0])
ok = db.execute('pragma integrity_check').fetchone()[0]
length = json.loads(db.execute('select level_samples from runs where id = 1').fetchone()[0])['snap']
k = db.execute('select max(k) from trend_snap where run = 1').fetchone()[0]
result = {"ok": ok, "last": (k + 1) * length - 1}`,
      store,
    );
    expect(after.ok).toBe('ok');
    expect(after.last).toBeGreaterThanOrEqual(seen - RATE);
    // Restart on the same store: no complaint, a second run, and the trend shows run 1, one gap row, run 2.
    const b = await startAgent(
      ['--no-server', '--store', store, '--status-every', '0.2', '--segment', '512', '--band', '20:1900'],
      /sample ([2-9]\d{4})/,
    );
    b.child.kill('SIGTERM');
    await exited(b.child);
    expect(b.err()).not.toMatch(/refused|moved aside/);
    const trend = floorline(
      'trend',
      '--store',
      store,
      '--channel',
      'ch0',
      '--band',
      '20:1900',
      '--every',
      '1s',
      '--json',
    );
    expect(trend.status, trend.stderr).toBe(0);
    const rows = (
      JSON.parse(trend.stdout) as {
        series: { quantity: string; rows: { t: number; gap: boolean; mean: number | null }[] }[];
      }
    ).series[0].rows;
    const gaps = rows.map((r, i) => (r.gap ? i : -1)).filter((i) => i >= 0);
    expect(gaps.length).toBe(1);
    expect(gaps[0]).toBeGreaterThan(1);
    expect(rows[gaps[0]].mean).toBeNull();
    expect(rows.length - gaps[0] - 1).toBeGreaterThanOrEqual(1); // run 2 rows follow the break
    // The killed run's 1 min row was rebuilt from its 1 s rows on the restart.
    const m = await py.run<number>(
      `import sqlite3
result = sqlite3.connect(args[0]).execute('select count(*) from trend_1m where run = 1').fetchone()[0]`,
      store,
    );
    expect(m).toBeGreaterThan(0);
  }, 60_000);

  it("a second agent on the same store is refused, naming the first one's PID; a note through the agent round-trips", async () => {
    const data = join(dir, 'shared');
    const first = await startAgent(
      ['--data', data, '--store', join(data, 'floorline.sqlite'), '--http-port', '0'],
      /dashboard\s+(http\S+)/,
    );
    try {
      const second = floorline(
        'replay',
        wav,
        '--speed',
        'max',
        '--no-server',
        '--data',
        data,
        '--store',
        join(data, 'floorline.sqlite'),
      );
      expect(second.status).toBe(2);
      expect(second.stderr).toContain(`PID ${first.child.pid}`);
      expect(second.stderr).toMatch(/in use by another agent.*stop that agent, or give this one another --data DIR/);
      const text = `relay "K3" on; it's <b>hot</b> — 50 % → ok; DROP TABLE notes;--`;
      const sent = floorline('note', '--agent', first.match[1], text);
      expect(sent.status, sent.stderr).toBe(0);
      // Wait for the next commit (at most 1 s), then read it back with python's sqlite3.
      await new Promise((r) => setTimeout(r, 1500));
      const notes = await py.run<string[]>(
        `import sqlite3
result = [r[0] for r in sqlite3.connect(args[0]).execute('select text from notes')]`,
        join(data, 'floorline.sqlite'),
      );
      expect(notes).toEqual([text]);
      // And in the data folder's event log, as a note event.
      const log = readFileSync(join(data, 'events.jsonl'), 'utf8')
        .trim()
        .split('\n')
        .map((l) => JSON.parse(l));
      expect(log.filter((e) => e.kind === 'note').map((e) => e.text)).toEqual([text]);
    } finally {
      first.child.kill('SIGTERM');
      await exited(first.child);
    }
    expect(existsSync(join(data, 'floorline.sqlite.lock'))).toBe(false);
  }, 60_000);

  it('hostile note text from `floorline note` is stored exactly, as text (read back with python sqlite3); control characters are refused', async () => {
    const store = join(dir, 'notes.sqlite');
    expect(floorline('replay', wav, '--speed', 'max', '--no-server', '--quiet', '--store', store).status).toBe(0);
    const hostile = [
      `'); DROP TABLE notes; --`,
      `Robert"); DELETE FROM trend_1s; --`,
      'line one\nline two\ttabbed',
      '%s %d ${x} `cmd` \\ 🙂 \u202e',
    ];
    for (const h of hostile) {
      const r = floorline('note', '--store', store, '--incident', 'spur-ch0-1', '--', h);
      expect(r.status, r.stderr).toBe(0);
    }
    const stored = await py.run<{ notes: string[]; rows: number }>(
      `import sqlite3
db = sqlite3.connect(args[0])
result = {"notes": [r[0] for r in db.execute('select text from notes order by id')], "rows": db.execute('select count(*) from trend_1s').fetchone()[0]}`,
      store,
    );
    expect(stored.notes).toEqual(hostile);
    expect(stored.rows).toBeGreaterThan(0);
    const bad = floorline('note', '--store', store, 'bell \u0007');
    expect(bad.status).toBe(2);
    expect(bad.stderr).toMatch(/control characters/);
  }, 60_000);
});

describe('history store refuses what is not its own', () => {
  it('a corrupt file is moved aside untouched and a new store starts; a foreign SQLite file too; queries refuse both', async () => {
    const corrupt = join(dir, 'corrupt.sqlite');
    const junk = Buffer.from('this is not a database '.repeat(400));
    writeFileSync(corrupt, junk);
    const q = floorline('trend', '--store', corrupt);
    expect(q.status).toBe(2);
    expect(q.stderr).toMatch(/is not a floorline history store: it is not an SQLite database/);
    const r = floorline('replay', wav, '--speed', 'max', '--no-server', '--quiet', '--store', corrupt);
    expect(r.status, r.stderr).toBe(0);
    expect(r.stderr).toMatch(
      /history store .*corrupt\.sqlite is refused: it is not an SQLite database.*moved aside to .*corrupt\.sqlite\.corrupt-\d{8}T\d{6}Z, untouched/,
    );
    const aside = readdirSync(dir).filter((f) => f.startsWith('corrupt.sqlite.corrupt-'));
    expect(aside.length).toBe(1);
    expect(readFileSync(join(dir, aside[0])).equals(junk)).toBe(true);
    expect(floorline('trend', '--store', corrupt, '--json').status).toBe(0);

    // A real SQLite file of some other program (python sqlite3 made it): refused and moved aside as well.
    const foreign = join(dir, 'foreign.sqlite');
    await py.run(
      `import sqlite3
db = sqlite3.connect(args[0]); db.execute('create table accounts (name text)'); db.execute("insert into accounts values ('x')"); db.commit(); db.close()`,
      foreign,
    );
    expect(floorline('incidents', '--store', foreign).stderr).toMatch(/another program/);
    const f = floorline('replay', wav, '--speed', 'max', '--no-server', '--quiet', '--store', foreign);
    expect(f.status, f.stderr).toBe(0);
    expect(f.stderr).toMatch(/refused: it is an SQLite file of another program.*moved aside/);
    const kept = readdirSync(dir).filter(
      (x) => x.startsWith('foreign.sqlite.corrupt-') && !x.endsWith('-wal') && !x.endsWith('-shm'),
    );
    const accounts = await py.run<number>(
      `import sqlite3
result = sqlite3.connect(args[0]).execute('select count(*) from accounts').fetchone()[0]`,
      join(dir, kept[0]),
    );
    expect(accounts).toBe(1);
  }, 60_000);

  it('a full disk: the monitor runs on with the same spectra, says once that history is off, and records the unstored span once space returns', async () => {
    const mnt = join(dir, 'small-disk');
    // A 384 KiB tmpfs (needs root, as CI and this machine run): room for the schema, not for 10 min × 4 channels.
    mountSmallDisk(mnt, '384k');
    try {
      const args = ['replay', longWav, '--speed', '40', '--no-server', '--quiet', '--segment', '256'];
      const reference = spawnSync(process.execPath, [bin, ...args, '--speed', 'max', '--no-history'], {
        encoding: 'utf8',
        cwd: dir,
      });
      const child = ownProcess(
        spawn(process.execPath, [bin, ...args, '--store', join(mnt, 'h.sqlite'), '--keep', 'snap=1h,1s=1d'], {
          cwd: dir,
          stdio: ['ignore', 'pipe', 'pipe'],
        }),
      );
      let err = '';
      let out = '';
      child.stdout!.setEncoding('utf8').on('data', (t: string) => (out += t));
      await new Promise<void>((resolve, reject) => {
        const timer = setTimeout(() => reject(new Error(`no recovery within 100 s: ${err}`)), 100_000);
        child.stderr!.setEncoding('utf8').on('data', (t: string) => {
          err += t;
          // The disk filled: give it room again (as an operator freeing space would); the writer retries.
          if (/history is not being kept/.test(err) && !/remounted/.test(err)) {
            err += '(remounted)';
            expect(spawnSync('mount', ['-o', 'remount,size=16m', mnt]).status).toBe(0);
          }
          if (/history is kept again/.test(err)) {
            clearTimeout(timer);
            resolve();
          }
        });
      });
      await exited(child);
      expect(child.exitCode, err).toBe(0);
      expect(err.match(/history is not being kept/g)?.length).toBe(1);
      expect(err).toMatch(/SQLITE_FULL.*Analysis and alarms go on; retrying every 5 s/);
      const digest = (s: string) => /digest ([0-9a-f]+)/.exec(s)?.[1];
      expect(digest(out)).toBe(digest(reference.stdout));
      const span = await py.run<{ from: number; to: number; reason: string }[]>(
        `import sqlite3
result = [{"from": r[0], "to": r[1], "reason": r[2]} for r in sqlite3.connect(args[0]).execute('select from_sample, to_sample, reason from unstored')]`,
        join(mnt, 'h.sqlite'),
      );
      expect(span.length).toBe(1);
      expect(span[0].to).toBeGreaterThan(span[0].from);
      expect(span[0].reason).toMatch(/SQLITE_FULL/);
    } finally {
      releaseSmallDisks();
    }
  }, 240_000);
});
