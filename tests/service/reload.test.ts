// SIGHUP reloads the rig config: filter changes apply, a change that cannot apply live (a channel's gain, i.e. its
// calibration) or a broken file is refused with a message, and the run goes on with the old config.
import { spawn } from 'node:child_process';
import { mkdtempSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';

const root = new URL('../..', import.meta.url).pathname;
const sleep = (ms: number) => new Promise((r) => setTimeout(r, ms));

describe('reload on SIGHUP', () => {
  it('applies filter changes, refuses the rest, keeps running', async () => {
    const dir = mkdtempSync(join(tmpdir(), 'fl-reload-'));
    const config = join(dir, 'rig.json');
    const base = {
      channels: [
        { name: 'bridge', unit: 'V', gain: 100, inputReferred: true },
        { name: 'shorted', unit: 'V' },
      ],
      notify: [{ exec: ['/bin/true'], states: ['raised'] }],
      retention: { recordings: { maxBytes: 1e9 } },
      data: 'data',
    };
    writeFileSync(config, JSON.stringify(base));
    const child = spawn(
      process.execPath,
      [
        join(root, 'bin/floorline.mjs'),
        'replay',
        join(root, 'recordings/demo.wav'),
        '--config',
        config,
        '--speed',
        '1',
        '--no-server',
        '--no-history',
        '--status-every',
        '0',
      ],
      { stdio: ['ignore', 'pipe', 'pipe'] },
    );
    let err = '';
    let out = '';
    child.stderr.on('data', (c) => (err += c));
    child.stdout.on('data', (c) => (out += c));
    const exited = new Promise<number | null>((r) => child.on('exit', r));
    const hup = async (cfg: unknown) => {
      writeFileSync(config, typeof cfg === 'string' ? cfg : JSON.stringify(cfg));
      const before = err.length;
      child.kill('SIGHUP');
      for (let i = 0; i < 500 && !err.slice(before).includes('reload'); i++) await sleep(20);
      return err.slice(before);
    };
    // Running (the stream header is printed once the source has started; SIGHUP is handled from then on).
    for (let i = 0; i < 1000 && !/^stream /m.test(out); i++) await sleep(20);
    expect(
      await hup({
        ...base,
        notify: [{ exec: ['/bin/true'], states: ['raised', 'cleared'] }],
        retention: { recordings: { maxBytes: 5e8 } },
      }),
    ).toMatch(/reloaded .*notification filters and retention updated/);
    const refused = await hup({
      ...base,
      channels: [
        { name: 'bridge', unit: 'V', gain: 10, inputReferred: true },
        { name: 'shorted', unit: 'V' },
      ],
    });
    expect(refused).toMatch(/reload refused: channels cannot change while running; restart to apply/);
    expect(await hup({ ...base, notify: [{ webhook: 'http://127.0.0.1:9/x' }] })).toMatch(
      /reload refused: notify \(a sink added, removed or pointed elsewhere\)/,
    );
    expect(await hup('{ not json')).toMatch(/reload refused: config .*not valid JSON/);
    expect(await hup({ ...base, channels: [{ name: 'bridge', unit: 'V', gain: 0 }] })).toMatch(
      /reload refused: .*channels\[0\]\.gain: must be > 0/,
    );
    // Still running on the old config after all that.
    expect(child.exitCode).toBeNull();
    child.kill('SIGTERM');
    expect(await exited).toBe(0);
  }, 60_000);
});
