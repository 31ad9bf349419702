// GET /healthz on a live run over a real pty pair (socat): 503 before the board sends, 200 while samples arrive,
// 503 with the reason once they stop.
import { spawn } from 'node:child_process';
import { mkdtempSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { PtyPair, sleep, startSimulator, waitFor } from '../serial/pty-pair.ts';

const root = new URL('../..', import.meta.url).pathname;

describe('GET /healthz', () => {
  it('follows the samples: 503 before, 200 while they arrive, 503 after', async () => {
    const dir = mkdtempSync(join(tmpdir(), 'fl-health-'));
    const pair = new PtyPair(join(dir, 'board'), join(dir, 'host'));
    await pair.start();
    const agent = spawn(
      process.execPath,
      [
        join(root, 'bin/floorline.mjs'),
        'run',
        '--port',
        pair.host,
        '--http-port',
        '0',
        '--no-history',
        '--data',
        join(dir, 'data'),
        '--quiet',
      ],
      { stdio: ['ignore', 'pipe', 'pipe'] },
    );
    let out = '';
    agent.stdout.on('data', (c) => (out += c));
    try {
      await waitFor('dashboard URL', () => /dashboard\s+http:\/\/\S+/.test(out));
      const base = /dashboard\s+(http:\/\/\S+?)\/?(\s|$)/.exec(out)![1];
      const health = async () => {
        const r = await fetch(`${base}/healthz`);
        return { status: r.status, body: (await r.json()) as { ok: boolean; reason: string } };
      };
      const before = await health();
      expect(before.status).toBe(503);
      expect(before.body.reason).toMatch(/no samples/);

      const sim = startSimulator([join(root, 'recordings/demo-scenario.json'), '--out', pair.board, '--duration', '8']);
      let during = await health();
      for (let i = 0; i < 50 && during.status !== 200; i++) {
        await sleep(200);
        during = await health();
      }
      expect(during.status, during.body.reason).toBe(200);
      expect(during.body.ok).toBe(true);

      await sim.exited;
      // The board is silent now: within the 3 s staleness limit (and a margin for a loaded machine) it turns 503.
      let after = await health();
      for (let i = 0; i < 40 && after.status === 200; i++) {
        await sleep(200);
        after = await health();
      }
      expect(after.status).toBe(503);
      expect(after.body.reason).toMatch(/no samples for \d/);
    } finally {
      agent.kill('SIGTERM');
      await new Promise((r) => agent.once('exit', r));
      await pair.kill();
    }
  }, 60_000);
});
