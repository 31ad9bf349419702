// `floorline demo` shows its first scripted fault within seconds: the first pass opens 3 s before the mains pickup
// of recordings/demo-scenario.json, and the first alarm is that pickup, stamped in the recording's own sample time.
import { spawnSync } from 'node:child_process';
import { mkdtempSync, readFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';

const root = new URL('../../', import.meta.url).pathname;

describe('floorline demo', () => {
  it('raises its first alarm, the scripted mains pickup, within 5 s of sample time after it starts', () => {
    const data = mkdtempSync(join(tmpdir(), 'floorline-demo-start-'));
    const r = spawnSync(
      process.execPath,
      [join(root, 'bin/floorline.mjs'), 'demo', '--speed', 'max', '--no-loop', '--no-server', '--data', data],
      { encoding: 'utf8', timeout: 120_000 },
    );
    expect(r.status, r.stderr).toBe(0);
    const scenario = JSON.parse(readFileSync(join(root, 'recordings/demo-scenario.json'), 'utf8')) as {
      rate: number;
      duration: number;
      channels: { name: string; signals: { kind: string; start?: number }[] }[];
    };
    const mainsStart = scenario.channels
      .flatMap((c) => c.signals)
      .filter((s) => s.kind === 'mains')
      .map((s) => s.start!)[0];
    // One pass from the start point to the end of the file: the samples the summary counts tell where it began.
    const played = Number(/samples\s+(\d+)/.exec(r.stdout)![1]);
    const startT = scenario.duration - played / scenario.rate;
    expect(startT).toBeLessThan(mainsStart);
    const events = readFileSync(join(data, 'events.jsonl'), 'utf8')
      .trim()
      .split('\n')
      .map((l) => JSON.parse(l) as { kind: string; rule?: string; state?: string; t: number; sample: number });
    const first = events.find((e) => e.kind === 'alarm' && e.state === 'raised')!;
    expect(first.rule).toBe('mains');
    expect(first.t).toBeGreaterThanOrEqual(mainsStart);
    expect(first.t - startT).toBeLessThanOrEqual(5);
    expect(first.sample / scenario.rate).toBeCloseTo(first.t, 3); // stamped in the recording's own sample time
  }, 150_000);
});
