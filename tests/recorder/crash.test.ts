// kill -9 of the agent while it records, a full disk and an unwritable folder: files stay readable by
// scipy.io.wavfile and our reader, analysis goes on, the status says recording failed.
import { spawn, spawnSync } from 'node:child_process';
import { mkdirSync, readdirSync, statSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { afterAll, afterEach, beforeAll, describe, expect, it } from 'vitest';
import { dataFolderAt } from '../../agent/config/data-folder.ts';
import { repairRecordings } from '../../agent/recorder/repair-on-start.ts';
import { readWavFile } from '../../agent/wav/reader.ts';
import { Python, root, tempDir } from '../wav/support.ts';
import { mountSmallDisk, releaseSmallDisks } from '../support/small-disk.ts';

const RATE = 4000;
const FRAMES = 8 * RATE;
let dir: string;
let py: Python;
let source: string;
const bin = join(root, 'bin/floorline.mjs');

beforeAll(async () => {
  dir = tempDir('crash');
  py = new Python();
  source = join(dir, 'source.wav');
  await py.run(
    `rng = np.random.default_rng(5)
wavfile.write(args[0], args[1], (1e-3 * rng.standard_normal((args[2], 2))).astype(np.float32))`,
    source,
    RATE,
    FRAMES,
  );
});

afterAll(() => py.close());

function wavsIn(folder: string): string[] {
  return readdirSync(join(folder, 'recordings'))
    .filter((f) => f.endsWith('.wav'))
    .map((f) => join(folder, 'recordings', f));
}

afterEach(releaseSmallDisks);

describe('recording under failure', () => {
  it('after kill -9 the WAV opens in scipy.io.wavfile and our reader with at most the last second missing', async () => {
    const data = join(dir, 'killed');
    const child = spawn(
      process.execPath,
      [bin, 'replay', source, '--speed', '1', '--record', '--data', data, '--status-every', '0.2', '--no-server'],
      {
        stdio: ['ignore', 'pipe', 'pipe'],
      },
    );
    // Wait until the status line reports ≥ 2.5 s of sample time, then kill without warning.
    const lastSample = await new Promise<number>((resolve, reject) => {
      let seen = -1;
      const timer = setTimeout(() => reject(new Error('no status line within 20 s')), 20_000);
      child.stdout.setEncoding('utf8').on('data', (text: string) => {
        for (const m of text.matchAll(/sample (\d+)/g)) seen = Math.max(seen, Number(m[1]));
        if (seen >= 2.5 * RATE) {
          clearTimeout(timer);
          child.kill('SIGKILL');
          resolve(seen);
        }
      });
    });
    await new Promise((r) => child.once('exit', r));
    const [wav] = wavsIn(data);
    // scipy.io.wavfile.read on the file exactly as the crash left it.
    const scipyFrames = await py.run<number>(`fs, x = wavfile.read(args[0]); result = int(x.shape[0])`, wav);
    const ours = await readWavFile(wav);
    // At most the last second missing: the file holds every sample up to one second before the last reported one.
    // By design, not by timing: the recorder writes samples and sizes out every 0.5 s of sample time (blocks of
    // 20 ms here) even when its flush timer is starved (tests/recorder/recorder.test.ts checks that bound).
    expect(scipyFrames).toBeGreaterThanOrEqual(lastSample + 1 - RATE);
    expect(ours.info.frames).toBeGreaterThanOrEqual(scipyFrames);
    // What is there is the source, sample for sample (numpy.array_equal).
    const same = await py.run<boolean>(
      `fs, a = wavfile.read(args[0]); fs, b = wavfile.read(args[1]); result = bool(np.array_equal(a, b[: len(a)]))`,
      wav,
      source,
    );
    expect(same).toBe(true);
    // Repair on the next start makes the header cover every whole frame on disk (scipy agrees).
    const report = await repairRecordings(dataFolderAt(data));
    const size = statSync(wav).size;
    const repairedFrames = await py.run<number>(`fs, x = wavfile.read(args[0]); result = int(x.shape[0])`, wav);
    expect(repairedFrames).toBeGreaterThanOrEqual(scipyFrames);
    expect(repairedFrames * 8).toBeLessThanOrEqual(size);
    if (report.repaired.length) expect(report.repaired[0].frames).toBe(repairedFrames);
  });

  it('on a full disk: a clear error, analysis runs to the end, the summary says recording failed', async () => {
    const mnt = join(dir, 'small-disk');
    // A 96 KiB tmpfs: the 256 KB recording cannot fit. Needs root (as CI and this machine run).
    mountSmallDisk(mnt, '96k');
    try {
      // --no-history: the replay's own history store would compete for the same 96 KiB, and which writer fills it
      // first is a race (the store on a full disk has its own tests in tests/store/store-faults.test.ts).
      const args = ['replay', source, '--speed', 'max', '--no-server', '--no-history', '--quiet'];
      const reference = spawnSync(process.execPath, [bin, ...args], { encoding: 'utf8', cwd: dir });
      const full = spawnSync(process.execPath, [bin, ...args, '--record', '--data', mnt], {
        encoding: 'utf8',
        cwd: dir,
      });
      expect(full.status, full.stderr).toBe(0);
      // wavIoError's ENOSPC message (agent/wav/errors.ts) names the file and the fix.
      expect(full.stderr).toMatch(/recording failed: .*disk is full; free some space/);
      expect(full.stdout).toMatch(/recording {2}FAILED/);
      // Analysis went on: the same snapshots (same digest) as the run without recording.
      const digest = (s: string) => /digest ([0-9a-f]+)/.exec(s)?.[1];
      expect(digest(full.stdout)).toBe(digest(reference.stdout));
      expect(full.stdout).toMatch(/samples {4}32000 /);
      // The part that reached the disk is a readable WAV (scipy.io.wavfile), after the repair a restart does.
      await repairRecordings(dataFolderAt(mnt));
      const [wav] = wavsIn(mnt);
      const frames = await py.run<number>(`fs, x = wavfile.read(args[0]); result = int(x.shape[0])`, wav);
      expect(frames).toBeGreaterThan(0);
      expect(frames).toBeLessThan(FRAMES);
    } finally {
      releaseSmallDisks();
    }
  });

  it('with an unwritable recordings folder: a clear error, analysis runs to the end', () => {
    const data = join(dir, 'blocked');
    mkdirSync(data, { recursive: true });
    writeFileSync(join(data, 'recordings'), 'not a folder'); // mkdir and every file inside fail (ENOTDIR/EEXIST)
    const r = spawnSync(
      process.execPath,
      [bin, 'replay', source, '--speed', 'max', '--no-server', '--quiet', '--record', '--data', data],
      { encoding: 'utf8', cwd: dir },
    );
    expect(r.status, r.stderr).toBe(0);
    expect(r.stderr).toMatch(/cannot create data folder .*recordings.*--data DIR/);
    expect(r.stderr).toMatch(/recording failed/);
    expect(r.stdout).toMatch(/samples {4}32000 /);
  });
});
