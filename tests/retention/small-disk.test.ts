// Disk retention on a small disk (a 16 MiB tmpfs; needs root, as CI and this machine run): the demo records in
// 2 s files under a 0.8 MB quota; meanwhile another writer fills the disk below the 4 MB free-space floor and later
// frees it again. The quota must hold, recording must pause with a `disk` alarm raised and then cleared, the event
// captures made while paused must survive as valid WAVs, and analysis must not notice (same spectra digest).
import { spawn, spawnSync } from 'node:child_process';
import {
  mkdirSync,
  mkdtempSync,
  readdirSync,
  readFileSync,
  rmSync,
  statSync,
  statfsSync,
  writeFileSync,
} from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterEach, describe, expect, it } from 'vitest';
import { mountSmallDisk, ownProcess, releaseSmallDisks } from '../support/small-disk.ts';

const root = new URL('../..', import.meta.url).pathname;
const bin = join(root, 'bin/floorline.mjs');
const sleep = (ms: number) => new Promise((r) => setTimeout(r, ms));
const MB = 1_000_000;
/** Recordings quota: about two 2 s files (128 kB each), so three files after the pause are enough for a sweep. */
const QUOTA = 0.3 * MB;

afterEach(releaseSmallDisks);

describe('retention on a small disk', () => {
  it('quota holds, the floor pauses recording with a disk alarm, captures survive, analysis goes on', async () => {
    const dir = mkdtempSync(join(tmpdir(), 'fl-disk-'));
    const mnt = join(dir, 'disk');
    mountSmallDisk(mnt, '16m');
    try {
      const config = join(dir, 'rig.json');
      writeFileSync(
        config,
        JSON.stringify({
          data: join(mnt, 'data'),
          retention: { recordings: { maxBytes: QUOTA }, captures: { maxBytes: 8 * MB }, minFreeBytes: 4 * MB },
        }),
      );
      const args = [
        'demo',
        '--speed',
        '5',
        '--no-loop',
        '--no-server',
        '--quiet',
        '--no-history',
        '--pre',
        '2',
        '--post',
        '2',
      ];
      const child = ownProcess(
        spawn(process.execPath, [bin, ...args, '--config', config, '--record', '--rotate', '2'], {
          stdio: ['ignore', 'pipe', 'pipe'],
        }),
      );
      let out = '';
      let err = '';
      child.stdout.on('data', (c) => (out += c));
      child.stderr.on('data', (c) => (err += c));
      const exited = new Promise<number | null>((r) => child.on('exit', r));
      // Driven by sample time, not the wall clock: once the recording has begun its second 2 s file (the demo
      // opens at t = 17 s, so about t = 19 s) another writer leaves 3 MB free (below the floor); once the spur at
      // t = 30 s is in the event log it frees the space. After that, three more files pass the quota, so the sweep
      // deletes however late the space came back.
      const recDir = join(mnt, 'data/recordings');
      const eventsFile = join(mnt, 'data/events.jsonl');
      const until = async (cond: () => boolean) => {
        for (let i = 0; i < 400 && !cond(); i++) await sleep(25);
      };
      await until(() => {
        try {
          return readdirSync(recDir).filter((f) => f.startsWith('rec-') && f.endsWith('.wav')).length >= 2;
        } catch {
          return false;
        }
      });
      const fs = statfsSync(mnt);
      const filler = join(mnt, 'filler.bin');
      writeFileSync(filler, Buffer.alloc(Math.max(0, fs.bavail * fs.bsize - 3 * MB)));
      await until(() => {
        try {
          return readFileSync(eventsFile, 'utf8').includes('"rule":"spur"');
        } catch {
          return false;
        }
      });
      rmSync(filler);
      expect(await exited, err).toBe(0);

      const events = readFileSync(eventsFile, 'utf8')
        .trim()
        .split('\n')
        .map((l) => JSON.parse(l));
      const disk = events.filter((e) => e.rule === 'disk').map((e) => e.state);
      expect(disk, JSON.stringify(events.map((e) => [e.rule, e.state, e.sample, e.detail.slice(0, 60)]))).toEqual([
        'raised',
        'cleared',
      ]);
      const deletions = events.filter((e) => e.rule === 'retention');
      expect(deletions.length).toBeGreaterThan(0);
      for (const d of deletions) expect(d.detail).toMatch(/^deleted recordings\/rec-\S+\.wav /);
      // Alarms went on while paused: the spur at t = 30 s was raised between the disk raise and clear.
      const raisedAt = events.findIndex((e) => e.rule === 'disk' && e.state === 'raised');
      const clearedAt = events.findIndex((e) => e.rule === 'disk' && e.state === 'cleared');
      expect(events.slice(raisedAt, clearedAt).some((e) => e.rule === 'spur' && e.state === 'raised')).toBe(true);

      const files = readdirSync(recDir);
      const size = (f: string) => statSync(join(recDir, f)).size + statSync(join(recDir, `${f}.json`)).size;
      const rec = files.filter((f) => f.startsWith('rec-') && f.endsWith('.wav'));
      // The quota holds up to the file being written (2 s × 2 ch × 8 kS/s × 4 B = 128 kB) and one sweep's growth.
      const recBytes = rec.reduce((a, f) => a + size(f), 0);
      expect(recBytes).toBeLessThan(QUOTA + 2 * 128_000 * 2);
      const captures = files.filter((f) => f.startsWith('capture-') && f.endsWith('.wav'));
      expect(captures.some((f) => f.includes('spur'))).toBe(true);
      // Every kept file opens in scipy.io.wavfile.
      const py = spawnSync(
        'python3',
        [
          '-c',
          `
import sys, scipy.io.wavfile as w
for p in sys.argv[1:]:
    fs, x = w.read(p); assert fs == 8000 and x.shape[0] > 0, p
print('ok')`,
          ...[...rec, ...captures].map((f) => join(recDir, f)),
        ],
        { encoding: 'utf8' },
      );
      expect(py.stdout.trim(), py.stderr).toBe('ok');

      // Analysis is the same as a run without recording (same snapshot digest).
      const ref = spawnSync(process.execPath, [bin, ...args, '--speed', 'max', '--data', join(dir, 'ref')], {
        encoding: 'utf8',
      });
      const digest = (s: string) => /digest ([0-9a-f]+)/.exec(s)?.[1];
      expect(digest(out)).toBeDefined();
      expect(digest(out)).toBe(digest(ref.stdout));
    } finally {
      releaseSmallDisks();
    }
  }, 60_000);
});
