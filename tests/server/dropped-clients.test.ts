// The agent closes a dashboard client for three reasons only (flooding, too slow to read, no heartbeat answer), and
// says so: a line naming the client and the reason, and a counter in /api/status and the metrics. A busy agent or a
// briefly stalled page must not be cut off. Ping/pong liveness is RFC 6455 §5.5.2–5.5.3; the tolerance is ours.
import { afterEach, describe, expect, it } from 'vitest';
import { startWithFake, type Started } from './support/start.ts';
import { TestClient } from './support/ws-client.ts';

let s: Started | null = null;
afterEach(async () => {
  await s?.server.close();
  s = null;
});

const sleep = (ms: number) => new Promise((r) => setTimeout(r, ms));

async function open(url: string): Promise<TestClient> {
  const c = await TestClient.open(url);
  await c.until(() => c.json.find((m) => m.type === 'hello'));
  return c;
}

/** Stops the client's socket from reading, so it neither sees pings nor answers them, until resumed. */
function socketOf(c: TestClient): { pause(): void; resume(): void } {
  return (c.ws as unknown as { _socket: { pause(): void; resume(): void } })._socket;
}

describe('a dropped dashboard client', () => {
  it('is logged with its reason and counted when it floods the agent', async () => {
    const lines: string[] = [];
    s = await startWithFake({ maxMessagesPerSecond: 20, statusIntervalMs: 10, warn: (l) => lines.push(l) });
    const flood = await open(s.ws);
    for (let i = 0; i < 200; i++) flood.ws.send(JSON.stringify({ type: 'get-status', id: i }));
    await flood.until(() => flood.closeCode !== null);
    expect(flood.closeCode).toBe(1008);
    await sleep(50);
    expect(lines).toEqual([expect.stringMatching(/^dashboard client \d+ dropped: more than 20 messages per second$/)]);
    expect(s.server.status().clients.dropped).toBe(1);
    const metrics = await (await fetch(`${s.base}/metrics`)).text();
    expect(metrics).toMatch(/^floorline_dashboard_clients_dropped_total 1$/m);
  });

  it('is dropped after two heartbeat pings go unanswered, and a client that leaves by itself is not counted', async () => {
    const lines: string[] = [];
    s = await startWithFake({ heartbeatMs: 100, warn: (l) => lines.push(l) });
    const gone = await open(s.ws);
    const leaving = await open(s.ws);
    leaving.ws.close(1000, 'bye');
    socketOf(gone).pause();
    const t0 = performance.now();
    while (s.server.status().clients.connected > 0 && performance.now() - t0 < 5000) await sleep(20);
    expect(s.server.status().clients.connected).toBe(0);
    // Two unanswered pings need two ticks after the first one: never earlier than one full interval.
    expect(performance.now() - t0).toBeGreaterThan(100);
    expect(lines).toEqual([expect.stringMatching(/dropped: no answer to the heartbeat pings$/)]);
    expect(s.server.status().clients.dropped).toBe(1);
  });

  it('keeps a page that stops reading for longer than one heartbeat interval, then reads again', async () => {
    s = await startWithFake({ heartbeatMs: 300 });
    const c = await open(s.ws);
    // In phase with the heartbeat: pause just after a ping was answered, so the pause spans exactly two ticks
    // (at +300 and +600 ms, both pings unanswered) and resumes 150 ms before the third.
    await new Promise<void>((resolve) => c.ws.once('ping', () => resolve()));
    socketOf(c).pause();
    await sleep(750);
    socketOf(c).resume();
    await sleep(600);
    expect(c.closeCode).toBeNull();
    expect(s.server.status().clients).toMatchObject({ connected: 1, dropped: 0 });
  });

  it('keeps its clients when the agent itself was too busy to read their pongs', async () => {
    s = await startWithFake({ heartbeatMs: 100 });
    const c = await open(s.ws);
    // Client and server share this thread: block it right after a ping was answered (ws sends the pong before
    // emitting 'ping'), so the pong sits unread while several heartbeat ticks fall due.
    await new Promise<void>((resolve) =>
      c.ws.once('ping', () => {
        const end = performance.now() + 450;
        while (performance.now() < end);
        resolve();
      }),
    );
    await sleep(60);
    expect(c.closeCode).toBeNull();
    expect(s.server.status().clients).toMatchObject({ connected: 1, dropped: 0 });
  });
});
