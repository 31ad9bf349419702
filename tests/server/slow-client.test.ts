// A slow dashboard client skips spectrum frames (latest wins) and never receives a frame whose buffer was reused
// while it was still being sent; a fast client on the same server gets every frame.
import { afterEach, describe, expect, it } from 'vitest';
import { startWithFake, type Started } from './support/start.ts';
import { TestClient } from './support/ws-client.ts';

let s: Started | null = null;
afterEach(async () => {
  await s?.server.close();
  s = null;
});

describe('latest-frame-only delivery', () => {
  it('skips and counts frames for a client that stops reading, and every frame it gets is intact', async () => {
    // 4 channels × 8193 bins: 131 kB a frame, so a paused reader fills the socket buffers after a few frames.
    s = await startWithFake({ maxFramesPerSecond: 1e6 }, { channels: 4, segment: 16384 });
    const slow = await TestClient.open(s.ws);
    const fast = await TestClient.open(s.ws);
    await slow.until(() => slow.json.find((m) => m.type === 'hello'));
    await fast.until(() => fast.json.find((m) => m.type === 'hello'));
    const raw = (slow.ws as unknown as { _socket: { pause(): void; resume(): void } })._socket;
    raw.pause();
    const N = 200;
    for (let i = 1; i <= N; i++) {
      s.backend.step(100, i); // every bin of snapshot i carries i × the white density
      // Pace by the reading client, so it is never slow itself and must get every frame.
      await fast.until(() => fast.frames.filter((f) => f.kind === 'spectrum').length >= i);
    }
    expect(fast.frames.filter((f) => f.kind === 'spectrum').map((f) => f.averages[0])).toEqual(
      Array.from({ length: N }, (_, i) => i + 1),
    );
    raw.resume();
    await slow.until(() => slow.frames.filter((f) => f.kind === 'spectrum').some((f) => f.averages[0] === N), 10_000);
    await slow.until(() => slow.frames.some((f) => f.kind === 'trace' && f.sample === N * 100 - 1), 10_000);
    const spectra = slow.frames.filter((f) => f.kind === 'spectrum');
    expect(spectra.length).toBeLessThan(N);
    const d = s.backend.density();
    for (const f of spectra) {
      const gain = f.averages[0]; // equivalentAverages counts snapshots in the double, so it names the gain
      for (let c = 0; c < 4; c++) {
        expect(f.values[c][1]).toBe(Math.fround(d * gain));
        expect(f.values[c][8000]).toBe(Math.fround(d * gain));
      }
    }
    const status = s.server.status();
    expect(status.clients.framesSkipped).toBeGreaterThan(0);
    expect(status.clients.framesSkipped).toBe(
      N - spectra.length + (N - slow.frames.filter((f) => f.kind === 'trace').length),
    );
    // Buffers are recycled: of 400 frames, spectra need a handful of buffers (in flight + waiting per client) and
    // traces one per size while their 2048-sample ring fills (21 sizes at 100 samples a block).
    expect(s.server.poolStats().created).toBeLessThan(40);
    slow.close();
    fast.close();
  });

  it('paces frames to maxFramesPerSecond and still delivers the newest one', async () => {
    s = await startWithFake({ maxFramesPerSecond: 10 });
    const c = await TestClient.open(s.ws);
    await c.until(() => c.json.find((m) => m.type === 'hello'));
    const t0 = performance.now();
    for (let i = 1; i <= 60; i++) {
      s.backend.step(80, i);
      await new Promise((r) => setTimeout(r, 5));
    }
    const elapsed = performance.now() - t0;
    await c.until(() => c.frames.some((f) => f.kind === 'spectrum' && f.averages[0] === 60), 5000);
    const spectra = c.frames.filter((f) => f.kind === 'spectrum');
    // At most one frame per 100 ms of the run plus the first and the final flush; the newest is never lost.
    expect(spectra.length).toBeLessThanOrEqual(Math.ceil(elapsed / 100) + 2);
    expect(spectra.length).toBeGreaterThan(1);
    expect(spectra.at(-1)!.averages[0]).toBe(60);
    c.close();
  });
});
