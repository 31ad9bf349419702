// A rotated recording replayed with --follow is analysed as one stream: the same snapshots (digest) as a replay
// of the recording it was made from. The files themselves are checked against scipy.io.wavfile in tests/recorder.
import { spawnSync } from 'node:child_process';
import { readdirSync } from 'node:fs';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { Python, root, tempDir } from '../wav/support.ts';

const bin = join(root, 'bin/floorline.mjs');
let dir: string;
let py: Python;
let source: string;

beforeAll(async () => {
  dir = tempDir('rotated');
  py = new Python();
  source = join(dir, 'source.wav');
  // 10 s of seeded noise with a line switching on at 4 s (scipy.io.wavfile.write, float32).
  await py.run(
    `fs, n = 4000, 40000
rng = np.random.default_rng(8)
x = 1e-4 * rng.standard_normal((n, 2))
t = np.arange(n) / fs
x[16000:, 1] += 1e-3 * np.sin(2 * np.pi * 700 * t[16000:])
wavfile.write(args[0], fs, x.astype(np.float32))`,
    source,
  );
});
afterAll(() => py.close());

function replay(...args: string[]) {
  const r = spawnSync(
    process.execPath,
    [bin, 'replay', ...args, '--speed', 'max', '--no-server', '--quiet', '--segment', '1024'],
    { encoding: 'utf8', cwd: dir },
  );
  expect(r.status, r.stderr).toBe(0);
  return r.stdout;
}
const digest = (s: string) => /digest ([0-9a-f]+)/.exec(s)?.[1];
const samples = (s: string) => Number(/samples {4}(\d+)/.exec(s)?.[1]);

describe('replay --follow', () => {
  it('replays a rotated recording as the one stream it was recorded from', () => {
    const reference = replay(source, '--data', join(dir, 'd1'), '--record', '--rotate', '3');
    const files = readdirSync(join(dir, 'd1', 'recordings'))
      .filter((f) => f.startsWith('rec-') && f.endsWith('.wav'))
      .sort((a, b) => Number(/-s(\d+)\.wav$/.exec(a)![1]) - Number(/-s(\d+)\.wav$/.exec(b)![1]));
    expect(files).toHaveLength(4);
    const first = join(dir, 'd1', 'recordings', files[0]);
    const followed = replay(first, '--follow', '--data', join(dir, 'd2'));
    expect(samples(followed)).toBe(40000);
    expect(digest(followed)).toBe(digest(reference));
    // Without --follow only the first file (3 s) is replayed.
    expect(samples(replay(first, '--data', join(dir, 'd3')))).toBe(12000);
  });
});
