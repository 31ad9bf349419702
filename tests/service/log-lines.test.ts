// Structured logs under a service manager: every output line is one JSON object with a level, and neither the
// access token nor a webhook header value appears anywhere (the dashboard URL carries the token in text mode).
import { spawn } from 'node:child_process';
import { mkdtempSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';

const root = new URL('../..', import.meta.url).pathname;

describe('structured log lines', () => {
  it('JSON lines with levels, no secrets', async () => {
    const dir = mkdtempSync(join(tmpdir(), 'fl-log-'));
    const config = join(dir, 'rig.json');
    // The webhook points at a closed port, so its failures are logged (they must not show the header).
    writeFileSync(
      config,
      JSON.stringify({
        notify: [{ webhook: 'http://127.0.0.1:9/hook', headers: { Authorization: 'Bearer hook-secret-4242' } }],
      }),
    );
    const token = 'token-secret-0123456789abcdef';
    const child = spawn(
      process.execPath,
      [
        join(root, 'bin/floorline.mjs'),
        'demo',
        '--speed',
        '8',
        '--config',
        config,
        '--http-port',
        '0',
        '--no-history',
        '--data',
        join(dir, 'data'),
        '--status-every',
        '1',
      ],
      {
        env: { ...process.env, INVOCATION_ID: 'test', FLOORLINE_TOKEN: token },
        stdio: ['ignore', 'pipe', 'pipe'],
      },
    );
    let text = '';
    child.stdout.on('data', (c) => (text += c));
    child.stderr.on('data', (c) => (text += c));
    // Until the webhook's first failure is logged (the mains alarm at t = 21 s, 2.6 s in at 8×), then stop.
    for (let i = 0; i < 1500 && !/notify: .* failed/.test(text); i++) await new Promise((r) => setTimeout(r, 20));
    child.kill('SIGTERM');
    expect(await new Promise((r) => child.on('exit', r))).toBe(0);
    const lines = text.trim().split('\n');
    expect(lines.length).toBeGreaterThan(5);
    const records = lines.map((l) => JSON.parse(l));
    for (const r of records) {
      expect(['info', 'warn', 'error']).toContain(r.level);
      expect(Number.isNaN(Date.parse(r.time))).toBe(false);
      expect(typeof r.msg).toBe('string');
    }
    expect(records.some((r) => /dashboard/.test(r.msg))).toBe(true);
    expect(records.some((r) => /notify: .* failed/.test(r.msg))).toBe(true);
    expect(text).not.toContain(token);
    expect(text).not.toContain(encodeURIComponent(token));
    expect(text).not.toContain('hook-secret-4242');
  }, 60_000);
});
