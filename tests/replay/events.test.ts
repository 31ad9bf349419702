// Replaying the same recording gives the same events at the same sample indices, at any speed.
import { spawnSync } from 'node:child_process';
import { readFileSync } from 'node:fs';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { Python, root, tempDir } from '../wav/support.ts';

const RATE = 4000;
const ONSET = 12 * RATE;
const TONE_HZ = 437.5;
let dir: string;
let py: Python;
let wav: string;

beforeAll(async () => {
  dir = tempDir('replay-events');
  py = new Python();
  wav = join(dir, 'tone.wav');
  // 20 s of seeded white noise (100 µV rms); a 2 mV-peak line at 437.5 Hz joins ch0 at t = 12 s.
  await py.run(
    `fs, n, onset, f0 = args[1], args[2], args[3], args[4]
rng = np.random.default_rng(2)
x = 1e-4 * rng.standard_normal((n, 2))
t = np.arange(n) / fs
x[onset:, 0] += 2e-3 * np.sin(2 * np.pi * f0 * t[onset:])
wavfile.write(args[0], fs, x.astype(np.float32))`,
    wav,
    RATE,
    20 * RATE,
    ONSET,
    TONE_HZ,
  );
});

afterAll(() => py.close());

function replay(out: string, speed: string) {
  const r = spawnSync(
    process.execPath,
    [
      join(root, 'bin/floorline.mjs'),
      'replay',
      wav,
      '--speed',
      speed,
      '--no-server',
      '--quiet',
      '--segment',
      '1024',
      '--events-out',
      out,
      '--data',
      join(dir, `data-${speed}`),
    ],
    {
      encoding: 'utf8',
      cwd: dir,
      timeout: 60_000,
    },
  );
  expect(r.status, r.stderr).toBe(0);
  return readFileSync(join(dir, out), 'utf8');
}

describe('replay events', () => {
  it('are identical on two runs and at two speeds, and place the new line where numpy put it', async () => {
    const a = replay('a.jsonl', 'max');
    const b = replay('b.jsonl', 'max');
    const c = replay('c.jsonl', '8');
    expect(a.length).toBeGreaterThan(0);
    expect(b).toBe(a);
    expect(c).toBe(a);
    const events = a
      .trim()
      .split('\n')
      .map((l) => JSON.parse(l));
    const spur = events.find((e) => e.rule === 'spur' && e.state === 'raised');
    expect(spur).toBeDefined();
    expect(spur.channel).toBe('ch0');
    // The line exists only from sample 48000 on (numpy put it there) and sits at 437.5 Hz within one bin (3.9 Hz).
    expect(spur.sample).toBeGreaterThanOrEqual(ONSET);
    expect(spur.t).toBe(spur.sample / RATE);
    expect(Math.abs(spur.frequency - TONE_HZ)).toBeLessThan(RATE / 1024);
    // The capture it names exists and scipy.io.wavfile reads it as the recording's samples from its first sample.
    expect(spur.capture).toMatch(/^recordings\/capture-spur-ch0-.*\.wav$/);
    const capture = join(dir, 'data-max', spur.capture);
    const first = JSON.parse(readFileSync(`${capture}.json`, 'utf8')).firstSample;
    expect(first).toBe(spur.sample - 10 * RATE); // default 10 s before the trigger
    const same = await py.run<boolean>(
      `fs, src = wavfile.read(args[0]); fs, cap = wavfile.read(args[1])
result = bool(len(cap) > 0 and np.array_equal(cap, src[args[2]: args[2] + len(cap)]))`,
      wav,
      capture,
      first,
    );
    expect(same).toBe(true);
  });
});
