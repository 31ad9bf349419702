// Half-open HTTP connections cannot use up the agent's file handles: with the open-file limit at 200 (prlimit,
// util-linux), 400 connections that never finish their headers are held while the recorder rotates a file every
// second of sample time. Each rotation opens new files; none may fail with EMFILE, and recording goes on.
// The server's budget is a quarter of the limit (here 50), so the handles left for recording are never taken.
import { spawn, spawnSync } from 'node:child_process';
import { mkdtempSync, readdirSync, rmSync } from 'node:fs';
import { connect, type Socket } from 'node:net';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { freePort } from '../browser/support/agent.ts';

const root = new URL('../../', import.meta.url).pathname;
const hasPrlimit = spawnSync('prlimit', ['--version']).status === 0;

async function until(what: string, test: () => boolean | Promise<boolean>, ms: number, log: () => string) {
  for (const end = Date.now() + ms; !(await test());) {
    if (Date.now() > end) throw new Error(`timed out waiting for ${what}\n${log().slice(-3000)}`);
    await new Promise((r) => setTimeout(r, 100));
  }
}

describe('file handles', () => {
  it.skipIf(!hasPrlimit)(
    'with the limit at 200, 400 half-open connections leave recording able to open its files',
    async () => {
      const dir = mkdtempSync(join(tmpdir(), 'floorline-handles-'));
      const port = await freePort();
      const agent = spawn(
        'prlimit',
        [
          '--nofile=200:200',
          process.execPath,
          join(root, 'bin/floorline.mjs'),
          'demo',
          '--speed',
          '4',
          '--record',
          '--rotate',
          '1',
          '--data',
          dir,
          '--no-history',
          '--http-port',
          String(port),
          '--status-every',
          '0',
        ],
        { stdio: ['ignore', 'pipe', 'pipe'] },
      );
      let out = '';
      agent.stdout.on('data', (d) => (out += d));
      agent.stderr.on('data', (d) => (out += d));
      const log = () => out;
      const wavs = () => readdirSync(join(dir, 'recordings')).filter((n) => n.endsWith('.wav')).length;
      const sockets: Socket[] = [];
      try {
        await until('the dashboard URL', () => /dashboard\s+http/.test(out), 30_000, log);
        await until('the first recording file', () => wavs() > 0, 30_000, log);
        for (let i = 0; i < 400; i++) {
          const s = connect(port, '127.0.0.1');
          s.on('error', () => undefined);
          s.write('GET /api/status HTTP/1.1\r\nHost: 127.0.0.1\r\n'); // never finished: half-open
          sockets.push(s);
        }
        // While they are held: at least three more rotations, each opening a new WAV and sidecar.
        const before = wavs();
        await until('three rotations under the flood', () => wavs() >= before + 3, 60_000, log);
        expect(agent.exitCode, out).toBeNull();
        expect(out).not.toMatch(/EMFILE|too many open files/i);
        for (const s of sockets) s.destroy();
        let status: { recording: { state: string } } | undefined;
        await until(
          '/api/status after the flood',
          async () => {
            try {
              status = (await (await fetch(`http://127.0.0.1:${port}/api/status`)).json()) as typeof status;
              return true;
            } catch {
              return false;
            }
          },
          30_000,
          log,
        );
        expect(status?.recording.state).toBe('recording');
      } finally {
        for (const s of sockets) s.destroy();
        agent.kill('SIGKILL');
        rmSync(dir, { recursive: true, force: true });
      }
    },
    120_000,
  );
});
