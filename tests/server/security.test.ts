// The server's defences: loopback by default, a token for anything wider, Origin and Host checks, small messages,
// validated input, and no file outside the data folder.
import { afterEach, describe, expect, it } from 'vitest';
import { request } from 'node:http';
import { connect } from 'node:net';
import { writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { startServer } from '../../agent/server/index.ts';
import { ServerConfigError } from '../../agent/server/options.ts';
import { MAX_CLIENT_MESSAGE_BYTES } from '../../protocol/messages.ts';
import { startWithFake, type Started } from './support/start.ts';
import { TestClient } from './support/ws-client.ts';
import { FakeBackend } from './support/fake-backend.ts';

const TOKEN = 'a1b2c3d4e5f60718293a4b5c6d7e8f90';
let started: Started | null = null;
const clients: TestClient[] = [];

afterEach(async () => {
  for (const c of clients.splice(0)) c.close();
  await started?.server.close();
  started = null;
});

async function open(url: string, headers: Record<string, string> = {}): Promise<TestClient> {
  const c = await TestClient.open(url, headers);
  clients.push(c);
  return c;
}

/** A raw GET with chosen headers (fetch would not let us set Host). */
function get(
  url: string,
  headers: Record<string, string> = {},
): Promise<{ status: number; body: string; headers: Record<string, unknown> }> {
  return new Promise((resolve, reject) => {
    const req = request(url, { headers }, (res) => {
      let body = '';
      res.on('data', (d) => (body += d));
      res.on('end', () => resolve({ status: res.statusCode ?? 0, body, headers: res.headers }));
    });
    req.on('error', reject);
    req.end();
  });
}

/** Raw bytes to the port; resolves with whatever came back before the socket closed. */
function rawRequest(port: number, bytes: string): Promise<string> {
  return new Promise((resolve) => {
    const s = connect(port, '127.0.0.1');
    let got = '';
    s.on('data', (d) => (got += d.toString()));
    s.on('close', () => resolve(got));
    s.on('error', () => resolve(got));
    s.end(bytes);
  });
}

describe('binding', () => {
  it('listens on 127.0.0.1 by default and reports that in its URL', async () => {
    started = await startWithFake();
    expect(started.server.host).toBe('127.0.0.1');
    expect(started.server.url).toMatch(/^http:\/\/127\.0\.0\.1:\d+\/$/);
  });

  it('refuses to start on a wider address without a token, naming --token as the fix', async () => {
    const backend = new FakeBackend({ dataRoot: '/tmp/floorline-unused' });
    await expect(startServer(backend, { host: '0.0.0.0', port: 0, assetsDir: '/tmp' })).rejects.toThrow(
      ServerConfigError,
    );
    await expect(startServer(backend, { host: '0.0.0.0', port: 0, assetsDir: '/tmp' })).rejects.toThrow(/--token/);
  });

  it('refuses a short token', async () => {
    const backend = new FakeBackend({ dataRoot: '/tmp/floorline-unused' });
    await expect(startServer(backend, { host: '0.0.0.0', port: 0, token: 'short', assetsDir: '/tmp' })).rejects.toThrow(
      /at least 16/,
    );
  });

  it('starts on a wider address with a token and then requires it on every HTTP request and on the upgrade', async () => {
    started = await startWithFake({ host: '0.0.0.0', token: TOKEN });
    const base = `http://127.0.0.1:${started.server.port}`;
    for (const path of ['/', '/api/status', '/metrics', '/app.js']) {
      expect((await get(base + path)).status, path).toBe(401);
      expect((await get(base + path, { authorization: `Bearer ${TOKEN}` })).status, path).toBe(200);
      expect((await get(`${base}${path}?token=wrong-token-of-some-length`)).status, path).toBe(401);
    }
    await expect(open(`ws://127.0.0.1:${started.server.port}/ws`)).rejects.toThrow(/401/);
    const ok = await open(`ws://127.0.0.1:${started.server.port}/ws?token=${TOKEN}`);
    await ok.until(() => ok.json.find((m) => m.type === 'hello'));
  });

  it('turns a good ?token= into an HttpOnly SameSite=Strict cookie that then authorises the page and its socket', async () => {
    started = await startWithFake({ token: TOKEN });
    const first = await get(`${started.base}/?token=${TOKEN}`);
    expect(first.status).toBe(200);
    const cookie = String((first.headers['set-cookie'] as string[])[0]);
    expect(cookie).toMatch(/HttpOnly/);
    expect(cookie).toMatch(/SameSite=Strict/);
    const pair = cookie.split(';')[0];
    expect((await get(`${started.base}/api/status`, { cookie: pair })).status).toBe(200);
    const c = await open(started.ws, { cookie: pair });
    await c.until(() => c.json.find((m) => m.type === 'hello'));
  });
});

describe('origin and host', () => {
  it('refuses a WebSocket upgrade from another origin and accepts the page’s own', async () => {
    started = await startWithFake();
    await expect(open(started.ws, { origin: 'http://evil.example' })).rejects.toThrow(/403/);
    const own = await open(started.ws, { origin: started.base });
    await own.until(() => own.json.find((m) => m.type === 'hello'));
  });

  it('refuses HTTP requests whose Host is not a loopback name (DNS rebinding)', async () => {
    started = await startWithFake();
    const r = await get(`${started.base}/api/status`, { host: `rebind.example:${started.server.port}` });
    expect(r.status).toBe(403);
    expect((await get(`${started.base}/api/status`, { host: `localhost:${started.server.port}` })).status).toBe(200);
  });

  it('parses Host strictly: userinfo, a path or a bad port after a loopback name is refused', async () => {
    started = await startWithFake();
    for (const host of [
      `127.0.0.1:${started.server.port}@evil.example`,
      `127.0.0.1:${started.server.port}/x`,
      '127.0.0.1:99999',
      '127.0.0.1 evil',
    ]) {
      expect((await get(`${started.base}/api/status`, { host })).status, host).toBe(403);
    }
  });

  it('answers only GET and HEAD', async () => {
    started = await startWithFake();
    const r = await fetch(`${started.base}/api/status`, { method: 'POST', body: '{}' });
    expect(r.status).toBe(405);
  });
});

describe('pre-auth input that once stopped the process', () => {
  it('answers a request target that is not a URL (GET //[) with 400, on plain requests and upgrades, and keeps serving', async () => {
    started = await startWithFake({ token: TOKEN });
    for (const extra of [
      '',
      'Upgrade: websocket\r\nConnection: Upgrade\r\nSec-WebSocket-Version: 13\r\nSec-WebSocket-Key: dGhlIHNhbXBsZSBub25jZQ==\r\n',
    ]) {
      const reply = await rawRequest(started.server.port, `GET //[ HTTP/1.1\r\nHost: 127.0.0.1\r\n${extra}\r\n`);
      expect(reply).toMatch(/^HTTP\/1\.1 400/);
    }
    expect((await get(`${started.base}/api/status`, { authorization: `Bearer ${TOKEN}` })).status).toBe(200);
  });

  it('treats a token cookie that is not percent-encoding (floorline_token=%) as no token: 401, not a crash', async () => {
    started = await startWithFake({ token: TOKEN });
    expect((await get(`${started.base}/`, { cookie: 'floorline_token=%' })).status).toBe(401);
    expect((await get(`${started.base}/api/status`, { authorization: `Bearer ${TOKEN}` })).status).toBe(200);
  });
});

describe('messages', () => {
  it('closes only the client that sent an oversized message (1009) and keeps serving the others', async () => {
    started = await startWithFake();
    const big = await open(started.ws);
    const other = await open(started.ws);
    big.send('x'.repeat(MAX_CLIENT_MESSAGE_BYTES + 1));
    await big.until(() => big.closeCode !== null);
    expect(big.closeCode).toBe(1009); // RFC 6455 §7.4.1: 1009 = message too big
    other.send({ type: 'get-status', id: 7 });
    const r = await other.reply(7);
    expect(r.ok).toBe(true);
  });

  it('answers malformed JSON with a bad-json error and stays open', async () => {
    started = await startWithFake();
    const c = await open(started.ws);
    c.send('{"type": "get-status", "id": 1');
    const e = await c.until(() => c.json.find((m) => m.type === 'error'));
    expect(e.type === 'error' && e.error.code).toBe('bad-json');
    c.send({ type: 'get-status', id: 2 });
    expect((await c.reply(2)).ok).toBe(true);
  });

  it('answers a valid type with a bad field as a reply with the request id, an unknown type as an error', async () => {
    started = await startWithFake();
    const c = await open(started.ws);
    c.send({ type: 'set-analysis', id: 3, segment: 1000 });
    const r = await c.reply(3);
    expect(r.ok === false && r.error.code).toBe('bad-message');
    c.send({ type: 'format-disk', id: 4 });
    const e = await c.until(() => c.json.find((m) => m.type === 'error'));
    expect(e.type === 'error' && e.error.code).toBe('unknown-type');
  });

  it('refuses binary messages from clients', async () => {
    started = await startWithFake();
    const c = await open(started.ws);
    c.ws.send(Buffer.from([1, 2, 3]));
    const e = await c.until(() => c.json.find((m) => m.type === 'error'));
    expect(e.type === 'error' && e.error.code).toBe('binary-refused');
  });

  it('passes a backend refusal back as the reply’s error', async () => {
    started = await startWithFake({ controlIntervalMs: 0 }); // two actions back to back: this test is about the refusal, not the pacing
    started.backend.step();
    const c = await open(started.ws);
    c.send({ type: 'set-analysis', id: 5, window: 'no-such-window' });
    const r = await c.reply(5);
    expect(r.ok === false && r.error.message).toMatch(/no-such-window/);
    c.send({ type: 'set-analysis', id: 6, segment: 131072 });
    const r2 = await c.reply(6);
    expect(r2.ok === false && r2.error.code).toBe('unsupported');
  });
});

describe('files', () => {
  it('refuses a baseline name that would leave the data folder and writes one with a plain name', async () => {
    started = await startWithFake();
    const c = await open(started.ws);
    c.send({ type: 'capture-baseline', id: 1, seconds: 2, name: '../../etc/owned.json' });
    const r = await c.reply(1);
    expect(r.ok === false && r.error.code).toBe('path-refused');
    c.send({ type: 'capture-baseline', id: 2, seconds: 2, name: 'quiet-bench.json' });
    const ok = await c.reply(2);
    expect(ok.ok && ok.request === 'capture-baseline' && ok.result.file).toBe('baselines/quiet-bench.json');
  });

  it('serves files inside the data folder and refuses ../ escapes, encoded escapes and absolute paths', async () => {
    started = await startWithFake();
    writeFileSync(join(started.backend.dataRoot, 'recordings', 'capture-1.wav'), 'RIFF');
    writeFileSync(join(started.dir, 'secret.txt'), 'not yours');
    const ok = await get(`${started.base}/files/recordings/capture-1.wav`);
    expect(ok.status).toBe(200);
    expect(ok.body).toBe('RIFF');
    // Raw ../ in the request target (http.request keeps it as given), percent-encoded ../, and an absolute path.
    for (const p of [
      '/files/../secret.txt',
      '/files/%2e%2e%2fsecret.txt',
      '/files/..%2F..%2Fsecret.txt',
      `/files/${encodeURIComponent(join(started.dir, 'secret.txt'))}`,
    ]) {
      const r = await get(started.base + p);
      expect(r.status, p).not.toBe(200);
      expect(r.body, p).not.toContain('not yours');
    }
    const enc = await get(`${started.base}/files/%2e%2e%2fsecret.txt`);
    expect(enc.status).toBe(403);
  });
});
