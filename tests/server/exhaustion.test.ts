// Exhaustion by local clients: a per-client message rate limit (closed with 1008), status computed once per
// tick and shared, a cap on clients, control actions rate-limited agent-wide, a connection budget, and a
// memory bound on analysis settings.
import { afterEach, describe, expect, it } from 'vitest';
import { connect, type Socket } from 'node:net';
import { startWithFake, type Started } from './support/start.ts';
import { TestClient } from './support/ws-client.ts';
import { Pipeline } from '../../agent/pipeline/pipeline.ts';
import { ANALYSIS_MEMORY_MAX_BYTES } from '../../agent/pipeline/analyser.ts';

let started: Started | null = null;
const clients: TestClient[] = [];
afterEach(async () => {
  for (const c of clients.splice(0)) c.close();
  await started?.server.close();
  started = null;
});

async function open(url: string): Promise<TestClient> {
  const c = await TestClient.open(url);
  clients.push(c);
  await c.until(() => c.json.find((m) => m.type === 'hello'));
  return c;
}

describe('a client that floods the agent', () => {
  it('is closed with 1008 naming the limit, while another client is still answered', async () => {
    started = await startWithFake({ maxMessagesPerSecond: 20 });
    const flood = await open(started.ws);
    const calm = await open(started.ws);
    for (let i = 0; i < 200; i++) flood.ws.send(JSON.stringify({ type: 'get-status', id: i }));
    await flood.until(() => flood.closeCode !== null);
    expect(flood.closeCode).toBe(1008);
    calm.ws.send(JSON.stringify({ type: 'get-status', id: 1 }));
    expect((await calm.reply(1)).ok).toBe(true);
  });

  it('costs one status computation per tick however many clients ask', async () => {
    started = await startWithFake({ statusIntervalMs: 60_000 });
    let computed = 0;
    const real = started.backend.status.bind(started.backend);
    started.backend.status = () => (computed++, real());
    const cs = [await open(started.ws), await open(started.ws), await open(started.ws)];
    const before = computed;
    for (const c of cs) for (let i = 0; i < 10; i++) c.ws.send(JSON.stringify({ type: 'get-status', id: i }));
    for (const c of cs) await c.reply(9);
    await fetch(`${started.base}/api/status`);
    expect(computed - before).toBe(0); // all 31 answers share the status computed for the hello
  });

  it('refuses the WebSocket beyond the client cap with 503', async () => {
    started = await startWithFake({ maxClients: 2 });
    await open(started.ws);
    await open(started.ws);
    await expect(TestClient.open(started.ws)).rejects.toThrow(/503/);
  });
});

describe('control actions', () => {
  it('are rate-limited agent-wide: a burst of recording toggles starts one, the rest are refused with rate-limited', async () => {
    started = await startWithFake({ controlIntervalMs: 1000 });
    const c = await open(started.ws);
    for (let i = 0; i < 10; i++)
      c.ws.send(JSON.stringify({ type: 'recording', id: i, action: i % 2 ? 'stop' : 'start' }));
    const replies = await Promise.all([...Array(10).keys()].map((i) => c.reply(i)));
    expect(replies.filter((r) => r.ok)).toHaveLength(1);
    expect(replies.filter((r) => !r.ok).every((r) => !r.ok && r.error.code === 'rate-limited')).toBe(true);
  });
});

describe('connections', () => {
  it('keeps open HTTP connections within the budget, so half-open ones cannot use up file handles', async () => {
    started = await startWithFake({ maxConnections: 8 });
    const sockets: Socket[] = [];
    for (let i = 0; i < 60; i++) {
      const s = connect(started.server.port, '127.0.0.1');
      s.on('error', () => undefined);
      s.write('GET /api/status HTTP/1.1\r\nHost: 127.0.0.1\r\n'); // never finished: half-open
      sockets.push(s);
    }
    await new Promise((r) => setTimeout(r, 300));
    const httpServer = (started.server as unknown as { connections?: () => Promise<number> }).connections;
    const open = httpServer ? await httpServer() : -1;
    for (const s of sockets) s.destroy();
    expect(open).toBeGreaterThanOrEqual(0);
    expect(open).toBeLessThanOrEqual(8);
    await new Promise((r) => setTimeout(r, 100));
    expect((await fetch(`${started.base}/api/status`)).status).toBe(200);
  });
});

describe('analysis settings', () => {
  it(`refuse a setting whose averaging would hold more than ${ANALYSIS_MEMORY_MAX_BYTES / 2 ** 20} MiB, before allocating it`, () => {
    const p = new Pipeline({ analysis: { segment: 1024 } });
    p.info({
      sampleRate: 48000,
      channels: [{ name: 'a', unit: 'V', scale: 1, fullScaleCounts: Infinity }],
      source: { kind: 'simulator', label: 't' },
      firstSample: 0,
    });
    const rss = process.memoryUsage().rss;
    // 4096 spectra × 32769 bins × 8 bytes = 1 GiB for one channel (the probe's setting).
    expect(() => p.configure({ analysis: { segment: 65536 }, averaging: { mode: 'median', count: 4096 } })).toThrow(
      /would hold 10\d\d MiB; the live analysis may hold at most 256 MiB/,
    );
    expect(process.memoryUsage().rss - rss).toBeLessThan(64 << 20);
    expect(() => p.configure({ analysis: { segment: 4096 }, averaging: { mode: 'median', count: 100 } })).not.toThrow();
  });
});
