// What the agent gives away, checked on the real process: the access token stays out of the terminal, of the
// command line (`ps` reads /proc/PID/cmdline) and of every printed line unless --show-token asks for the URL with
// it; error replies name files relative to the data folder, never its absolute path; and a set-analysis reply
// carries the settings it asked for, not the ones before it.
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { execFileSync } from 'node:child_process';
import { mkdtempSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { freePort, startAgent, type Agent } from '../browser/support/agent.ts';
import { TestClient } from './support/ws-client.ts';
import type { ServerMessage } from '../../protocol/messages.ts';

const TOKEN = 'leak-check-token-0123456789abcdef';
const agents: Agent[] = [];
const clients: TestClient[] = [];
let dir: string;

beforeAll(() => {
  dir = mkdtempSync(join(tmpdir(), 'floorline-leaks-'));
});
afterAll(async () => {
  for (const c of clients) c.close();
  for (const a of agents) if (a.proc.exitCode === null && a.proc.signalCode === null) await a.stop();
  rmSync(dir, { recursive: true, force: true });
});

/** `floorline demo`, or `replay FILE --loop` when `file` is given, at full speed with a server on a free port. */
async function demo(name: string, extra: string[], env: Record<string, string> = {}, file?: string): Promise<Agent> {
  const saved = { ...process.env };
  Object.assign(process.env, env);
  try {
    const port = await freePort();
    const a = await startAgent([
      ...(file ? ['replay', file, '--loop'] : ['demo']),
      '--speed',
      'max',
      '--http-port',
      String(port),
      '--data',
      join(dir, name),
      '--no-history',
      '--status-every',
      '0',
      ...extra,
    ]);
    agents.push(a);
    return a;
  } finally {
    process.env = saved;
  }
}

async function client(a: Agent): Promise<TestClient> {
  const c = await TestClient.open(`ws://127.0.0.1:${a.port}/ws`, { authorization: `Bearer ${TOKEN}` });
  clients.push(c);
  await c.until(() => c.json.find((m) => m.type === 'hello'), 20_000); // generous: a loaded machine
  return c;
}

const sleep = (ms: number) => new Promise((r) => setTimeout(r, ms));

describe('the access token', () => {
  it('read from --token-file is required, and appears neither in the printed URL, the output nor the command line', async () => {
    const file = join(dir, 'token');
    writeFileSync(file, TOKEN + '\n');
    const a = await demo('file', ['--token-file', file]);
    expect(a.url).not.toContain('token');
    const open = await fetch(`http://127.0.0.1:${a.port}/api/status`);
    expect(open.status).toBe(401);
    const authorised = await fetch(`http://127.0.0.1:${a.port}/api/status`, {
      headers: { authorization: `Bearer ${TOKEN}` },
    });
    expect(authorised.status).toBe(200);
    // /proc/PID/cmdline is what ps shows (proc(5), Linux man-pages): NUL-separated argv.
    const argv = readFileSync(`/proc/${a.proc.pid}/cmdline`, 'utf8');
    expect(argv).toContain('--token-file');
    expect(argv).not.toContain(TOKEN);
    expect(a.output()).not.toContain(TOKEN);
    expect(a.output()).toMatch(/token required: add \?token=… once, or pass --show-token/);
    await a.stop(); // three agents at full speed at once would starve the other tests of the two cores
  });

  it('from FLOORLINE_TOKEN is printed in the URL only with --show-token', async () => {
    const a = await demo('env', ['--show-token'], { FLOORLINE_TOKEN: TOKEN });
    expect(new URL(a.url).searchParams.get('token')).toBe(TOKEN);
    expect(readFileSync(`/proc/${a.proc.pid}/cmdline`, 'utf8')).not.toContain(TOKEN);
    await a.stop();
  });
});

describe('replies to a dashboard client', () => {
  let a: Agent;
  beforeAll(async () => {
    // Plain noise (no scripted clip, unlike the demo, which a baseline capture would refuse): numpy's generator
    // written by scipy.io.wavfile as float32 at 8000 S/s.
    const wav = join(dir, 'noise.wav');
    execFileSync('python3', [
      '-c',
      'import sys, numpy as np; from scipy.io import wavfile\n' +
        'wavfile.write(sys.argv[1], 8000, (np.random.default_rng(7).standard_normal(8000 * 20) * 1e-3).astype(np.float32))',
      wav,
    ]);
    a = await demo('replies', [], { FLOORLINE_TOKEN: TOKEN }, wav);
  });

  it('set-analysis answers with the new settings', async () => {
    const c = await client(a);
    c.send({ type: 'set-analysis', id: 1, segment: 2048, window: 'hamming' });
    const r = await c.reply(1);
    expect(r.ok, JSON.stringify(r)).toBe(true);
    if (!r.ok || r.request !== 'set-analysis') return;
    expect(r.result.context.settings.segment).toBe(2048);
    expect(r.result.context.settings.window).toBe('hamming');
    // binHz = fs / segment: the recording's 8000 S/s over 2048 (the Welch definition, common practice).
    expect(r.result.context.binHz).toBeCloseTo(8000 / 2048, 12);
  });

  it('name files relative to the data folder when a write fails, never its absolute path', async () => {
    const root = join(dir, 'replies');
    // baselines/ replaced by a plain file: the capture's write then fails with the OS naming the full path.
    rmSync(join(root, 'baselines'), { recursive: true, force: true });
    writeFileSync(join(root, 'baselines'), 'not a folder');
    await sleep(1100); // control actions are paced to one a second agent-wide
    const c = await client(a).catch((e: Error) => {
      throw new Error(`${e.message}; agent exit ${a.proc.exitCode} ${a.proc.signalCode}\n${a.output().slice(-2000)}`);
    });
    c.send({ type: 'capture-baseline', id: 2, seconds: 3, name: 'bench.json' });
    const r = await c.until(
      () => c.json.find((m): m is Extract<ServerMessage, { type: 'reply' }> => m.type === 'reply' && m.id === 2),
      30_000,
    );
    expect(r.ok).toBe(false);
    if (r.ok) return;
    expect(r.error.code).toBe('failed');
    expect(r.error.message).toMatch(/cannot write baselines\/bench\.json/);
    expect(r.error.message).not.toContain(root);
    expect(r.error.message).not.toContain(dir);
  });
});
