// Sink filters and the exec sink, on the events of the demo rig (recordings/README.md scripts them: mains pickup
// from t = 20 s, a switching spur from 30 s, a clip at 52.0–52.1 s that clears after its 1 s hold).
import { spawnSync } from 'node:child_process';
import { existsSync, mkdtempSync, readFileSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { beforeAll, describe, expect, it } from 'vitest';
import type { FloorlineEvent } from '../../protocol/events.ts';
import { SinkFilter } from '../../agent/notify/filter.ts';

const root = new URL('../..', import.meta.url).pathname;
const bin = join(root, 'bin/floorline.mjs');
const lines = (f: string) =>
  readFileSync(f, 'utf8')
    .trim()
    .split('\n')
    .filter(Boolean)
    .map((l) => JSON.parse(l));

describe('notification filters and the exec sink', () => {
  const dir = mkdtempSync(join(tmpdir(), 'fl-exec-'));
  // A file name full of shell syntax: an argument array passes it through literally, a shell would run it.
  const all = join(dir, 'all $(touch pwned) ;.jsonl');
  const clip = join(dir, 'clip.jsonl');
  const long = join(dir, 'long.jsonl');
  let events: FloorlineEvent[] = [];

  beforeAll(() => {
    const config = join(dir, 'rig.json');
    writeFileSync(
      config,
      JSON.stringify({
        notify: [
          { exec: ['/usr/bin/tee', '-a', all] },
          { exec: ['/usr/bin/tee', '-a', clip], states: ['raised'], rules: ['clip'] },
          { exec: ['/usr/bin/tee', '-a', long], minDurationSeconds: 2 },
        ],
        data: 'data',
      }),
    );
    const r = spawnSync(
      process.execPath,
      [
        bin,
        'replay',
        join(root, 'recordings/demo.wav'),
        '--config',
        config,
        '--speed',
        'max',
        '--no-server',
        '--quiet',
        '--events-out',
        join(dir, 'ev.jsonl'),
      ],
      { encoding: 'utf8', cwd: dir, timeout: 60_000 },
    );
    expect(r.status, r.stderr).toBe(0);
    events = lines(join(dir, 'ev.jsonl')).filter((e) => e.kind === 'alarm');
  });

  it('runs the program without a shell, event JSON on stdin, one run per notification', () => {
    expect(existsSync(all)).toBe(true);
    expect(existsSync(join(dir, 'pwned'))).toBe(false);
    const got = lines(all);
    expect(got.map((e) => `${e.rule}|${e.state}|${e.sample}`).sort()).toEqual(
      events.map((e) => `${e.rule}|${e.state}|${e.sample}`).sort(),
    );
    expect(new Set(got.map((e) => e.id)).size).toBe(got.length);
  });

  it('a sink gets only its rules and states', () => {
    const got = lines(clip);
    expect(got.map((e) => `${e.rule}|${e.state}`)).toEqual(['clip|raised']);
  });

  it('a minimum duration drops an alarm that ends sooner (the 1.3 s clip) and keeps the longer ones', () => {
    const got = lines(long);
    expect(got.some((e) => e.rule === 'clip')).toBe(false);
    const mains = events.filter((e) => e.rule === 'mains' && e.state === 'raised');
    expect(mains.length).toBeGreaterThan(0);
    expect(
      got
        .filter((e) => e.rule === 'mains' && e.state === 'raised')
        .map((e) => e.sample)
        .sort(),
    ).toEqual(mains.map((e) => e.sample).sort());
  });

  it('a quiet period per incident: one fault notifies once, then once on settle and once on clear', () => {
    // The demo's mains pickup raises harmonics 1, 3, 5 and 2 within 4 s, all in one incident.
    const count = (quietSeconds: number) => {
      const f = new SinkFilter({ exec: ['/bin/true'], quietSeconds });
      return events.flatMap((e) => f.offer(e)).map((e) => `${(e as { incident?: string }).incident}|${e.state}`);
    };
    expect(count(0).length).toBe(events.length);
    const quiet = count(60);
    const distinct = new Set(events.map((e) => `${(e as { incident?: string }).incident}|${e.state}`));
    expect(quiet.length).toBe(distinct.size);
    expect(new Set(quiet).size).toBe(quiet.length);
    expect(quiet.length).toBeLessThan(events.length);
  });
});
