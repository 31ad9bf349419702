// Hostile-client fuzz against the real agent process on loopback: seeded random request lines, headers, cookies,
// upgrade requests and WebSocket frames. Whatever arrives, the process stays alive and still answers /api/status.
// Bounded: a fixed number of runs from a fixed seed, each with a short socket timeout.
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { connect } from 'node:net';
import { mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import fc from 'fast-check';
import { WebSocket } from 'ws';
import { freePort, startAgent, type Agent } from '../browser/support/agent.ts';

const TOKEN = 'fuzz-token-0123456789abcdef';
export const HTTP_RUNS = 300;
export const WS_RUNS = 100;
let agent: Agent;
let dir: string;

beforeAll(async () => {
  dir = mkdtempSync(join(tmpdir(), 'floorline-fuzz-http-'));
  const port = await freePort();
  process.env.FLOORLINE_TOKEN = TOKEN;
  agent = await startAgent(['demo', '--http-port', String(port), '--data', dir, '--quiet', '--status-every', '0']);
  delete process.env.FLOORLINE_TOKEN;
}, 30_000);

afterAll(async () => {
  await agent?.stop();
  rmSync(dir, { recursive: true, force: true });
});

/** Sends raw bytes, waits for the reply or the close (at most 300 ms), and never fails on socket errors. */
function raw(port: number, bytes: string): Promise<string> {
  return new Promise((resolve) => {
    const s = connect(port, '127.0.0.1');
    let got = '';
    const done = (): void => {
      clearTimeout(timer);
      s.destroy();
      resolve(got);
    };
    const timer = setTimeout(done, 300);
    s.on('data', (d) => (got += d.toString('latin1')));
    s.on('error', done);
    s.on('close', done);
    s.write(bytes, 'latin1');
    s.end();
  });
}

async function statusAnswers(): Promise<number> {
  const res = await fetch(`http://127.0.0.1:${agent.port}/api/status`, {
    headers: { authorization: `Bearer ${TOKEN}` },
  });
  await res.text();
  return res.status;
}

// Pieces that have broken parsers before (from memory: malformed IPv6 literals, lone '%', '@' in Host) mixed
// with random text so the search is both aimed and open.
const nasty = fc.constantFrom(
  '//[',
  '/%',
  '%',
  '%E0%A4%A',
  '/..',
  '/files/%',
  '/files/../../etc/passwd',
  '/ws',
  '?token=',
  '?token=%',
  '@',
  '[::1',
  '\u0000',
  '\u00ff',
  '',
);
const piece = fc.oneof(nasty, fc.string({ maxLength: 12 }), fc.stringMatching(/^[!-~]{0,16}$/));
const text = fc.array(piece, { maxLength: 4 }).map((p) => p.join(''));
const method = fc.constantFrom('GET', 'HEAD', 'POST', 'PUT', 'OPTIONS', 'CONNECT', 'G\u00e9T', '');
const header = fc.oneof(
  fc.tuple(
    fc.constantFrom(
      'Host',
      'Cookie',
      'Origin',
      'Authorization',
      'Upgrade',
      'Connection',
      'Sec-WebSocket-Key',
      'Sec-WebSocket-Version',
      'Content-Length',
      'Transfer-Encoding',
    ),
    text,
  ),
  fc.constant(['Cookie', 'floorline_token=%'] as [string, string]),
  fc.constant(['Host', `127.0.0.1:1@evil.example`] as [string, string]),
  fc.tuple(fc.stringMatching(/^[A-Za-z-]{1,12}$/), text),
);
const request = fc.record({
  method,
  target: fc.oneof(
    fc.constant('/api/status'),
    text.map((t) => (t.startsWith('/') ? t : '/' + t)),
    text,
  ),
  version: fc.constantFrom('HTTP/1.1', 'HTTP/1.0', 'HTTP/9', ''),
  headers: fc.array(header, { maxLength: 6 }),
  upgrade: fc.boolean(),
  body: fc.string({ maxLength: 40 }),
});

describe('the agent under hostile HTTP and WebSocket input', () => {
  it(`survives ${HTTP_RUNS} random HTTP requests and upgrades, then still answers /api/status`, async () => {
    await fc.assert(
      fc.asyncProperty(request, async (r) => {
        const lines = [`${r.method} ${r.target} ${r.version}`, ...r.headers.map(([k, v]) => `${k}: ${v}`)];
        if (r.upgrade)
          lines.push(
            'Upgrade: websocket',
            'Connection: Upgrade',
            'Sec-WebSocket-Version: 13',
            'Sec-WebSocket-Key: dGhlIHNhbXBsZSBub25jZQ==',
          );
        await raw(agent.port, lines.join('\r\n') + '\r\n\r\n' + r.body);
        expect(agent.proc.exitCode, agent.output()).toBeNull();
      }),
      { seed: 16, numRuns: HTTP_RUNS },
    );
    expect(await statusAnswers()).toBe(200);
  }, 60_000);

  it(`survives ${WS_RUNS} random WebSocket messages from an authorised client, then still answers /api/status`, async () => {
    const message = fc.oneof(
      fc.json(),
      fc
        .record({
          type: fc.constantFrom('request', 'hello', 'x'),
          id: fc.oneof(fc.integer(), fc.string()),
          request: fc.constantFrom(
            'get-status',
            'set-analysis',
            'start-recording',
            'stop-recording',
            'capture-baseline',
            'nope',
          ),
          params: fc.anything(),
        })
        .map((o) => JSON.stringify(o)),
      fc.uint8Array({ maxLength: 64 }),
      fc.string({ maxLength: 200 }),
    );
    await fc.assert(
      fc.asyncProperty(fc.array(message, { minLength: 1, maxLength: 5 }), async (msgs) => {
        const ws = new WebSocket(`ws://127.0.0.1:${agent.port}/ws`, {
          headers: { authorization: `Bearer ${TOKEN}` },
          perMessageDeflate: false,
        });
        await new Promise<void>((resolve) => {
          const timer = setTimeout(() => {
            ws.terminate();
            resolve();
          }, 300);
          ws.on('error', () => undefined);
          ws.on('close', () => {
            clearTimeout(timer);
            resolve();
          });
          ws.on('open', () => {
            for (const m of msgs) ws.send(m);
            setTimeout(() => ws.close(), 20);
          });
        });
        expect(agent.proc.exitCode, agent.output()).toBeNull();
      }),
      { seed: 61, numRuns: WS_RUNS },
    );
    expect(await statusAnswers()).toBe(200);
  }, 90_000);
});
