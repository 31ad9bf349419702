// The whole chain on a live run: the simulator plays the demo rig's scripted faults into a real pty pair (socat),
// `floorline run --config` watches it and notifies a local webhook whose receiver is down for 60 s, from t ≈ 15 s
// to t ≈ 75 s (through every scripted fault and past the end of the run). After dedup on the notification id, every incident must have
// arrived exactly once per state (raised, settled, cleared) as the event log has it, and nothing may be lost.
import { spawn } from 'node:child_process';
import { createServer, type Server } from 'node:http';
import { mkdtempSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import type { AddressInfo } from 'node:net';
import { describe, expect, it } from 'vitest';
import { PtyPair, sleep, startSimulator } from '../serial/pty-pair.ts';
import { CLI, headlessAgainstDemoBaseline, readJsonLines } from '../support/cli.ts';
import { root } from '../wav/support.ts';

/** The alarm events of the run's log, as incident|state keys. */
const alarmKeys = (log: string): string[] =>
  readJsonLines<{ kind: string; incident: string; state: string }>(log)
    .filter((e) => e.kind === 'alarm')
    .map((e) => `${e.incident}|${e.state}`);

describe('live run over a pty: one notification per incident and state, through an outage', () => {
  it('exactly once per incident raise, settle and clear', async () => {
    const dir = mkdtempSync(join(tmpdir(), 'fl-pty-notify-'));
    const port = await new Promise<number>((r) => {
      const s = createServer().listen(0, '127.0.0.1', () => {
        const p = (s.address() as AddressInfo).port;
        s.close(() => r(p));
      });
    });
    const config = join(dir, 'rig.json');
    writeFileSync(
      config,
      JSON.stringify({
        source: { format: 'binary' },
        // Quiet period longer than the run: one notification per incident and state.
        notify: [{ webhook: `http://127.0.0.1:${port}/hook`, quietSeconds: 600 }],
        data: join(dir, 'data'),
      }),
    );
    const got: { id: string; incident: string; state: string }[] = [];
    let server: Server | undefined;
    const up = () => {
      server = createServer((req, res) => {
        let b = '';
        req.on('data', (c) => (b += c));
        req.on('end', () => {
          got.push(JSON.parse(b));
          res.statusCode = 204;
          res.end();
        });
      }).listen(port, '127.0.0.1');
    };
    up();
    const pair = new PtyPair(join(dir, 'board'), join(dir, 'host'));
    await pair.start();
    const agent = spawn(
      process.execPath,
      [CLI, 'run', '--config', config, '--port', pair.host, ...headlessAgainstDemoBaseline(join(dir, 'events.jsonl'))],
      { stdio: ['ignore', 'ignore', 'pipe'] },
    );
    let err = '';
    agent.stderr.on('data', (c) => (err += c));
    const exited = new Promise<number | null>((r) => agent.on('exit', r));
    try {
      await sleep(500);
      const sim = startSimulator([join(root, 'recordings/demo-scenario.json'), '--out', pair.board]);
      await sleep(15_000);
      server!.close();
      server!.closeAllConnections();
      await sleep(60_000);
      up();
      await sim.exited;
      // Back-off after 60 s down is at most 32 s (±20 %); wait until everything in the event log has arrived.
      const want = () => new Set(alarmKeys(join(dir, 'events.jsonl'))).size;
      for (let i = 0; i < 120 && new Set(got.map((g) => g.id)).size < want(); i++) await sleep(500);
      await sleep(1000);
    } finally {
      agent.kill('SIGTERM');
      await pair.kill();
    }
    expect(await exited, err).toBe(0);
    await new Promise<void>((r) => server!.close(() => r()));
    expect(err).toMatch(/notify: .* failed/);

    const expected = [...new Set(alarmKeys(join(dir, 'events.jsonl')))].sort();
    expect(expected.some((k) => k.endsWith('|settled'))).toBe(true);
    expect(expected.some((k) => k.endsWith('|cleared'))).toBe(true);
    const unique = new Map(got.map((g) => [g.id, g]));
    expect([...unique.values()].map((g) => `${g.incident}|${g.state}`).sort()).toEqual(expected);
  }, 200_000);
});
