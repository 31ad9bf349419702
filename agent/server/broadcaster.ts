// Turns backend output into wire frames once and offers them to every client (latest-wins per client).
import type { ServerBlock, ServerSnapshot, BaselineOverlay } from './backend.ts';
import { encodeFrame, frameBytes, type FrameKindName } from '../../protocol/frame.ts';
import type { ServerMessage } from '../../protocol/messages.ts';
import { FramePool, type PooledFrame } from './frame-pool.ts';
import { TraceRing } from './trace-ring.ts';
import type { ClientConnection } from './client.ts';

export class Broadcaster {
  readonly clients = new Set<ClientConnection>();
  /** One pool per frame kind, so buffers of one size are not evicted by another's. */
  readonly pools: Record<FrameKindName, FramePool> = {
    spectrum: new FramePool(),
    baseline: new FramePool(2),
    trace: new FramePool(),
  };
  private trace: TraceRing | null = null;
  private seq: Record<FrameKindName, number> = { spectrum: 0, baseline: 0, trace: 0 };
  /** Counters of clients that have gone, so totals in status and metrics never go backwards. */
  private goneSent = 0;
  private goneSkipped = 0;
  /** Clients the agent closed for a policy (slow, flooding, silent), not the ones that left. */
  private dropped = 0;

  constructor(
    private readonly traceLength: number,
    /** Told once per dropped client, so an operator can see why a dashboard keeps reconnecting. */
    private readonly onDropped: (clientId: number, reason: string) => void = () => {},
  ) {}

  add(client: ClientConnection): void {
    this.clients.add(client);
  }

  remove(client: ClientConnection): void {
    if (!this.clients.delete(client)) return;
    client.release();
    if (client.droppedFor !== null) {
      this.dropped++;
      this.onDropped(client.id, client.droppedFor);
    }
    this.goneSent += client.framesSent;
    this.goneSkipped += client.framesSkipped;
  }

  totals(): { connected: number; framesSent: number; framesSkipped: number; dropped: number } {
    let sent = this.goneSent;
    let skipped = this.goneSkipped;
    for (const c of this.clients) {
      sent += c.framesSent;
      skipped += c.framesSkipped;
    }
    return { connected: this.clients.size, framesSent: sent, framesSkipped: skipped, dropped: this.dropped };
  }

  json(message: ServerMessage): void {
    for (const c of this.clients) c.sendJson(message);
  }

  resetTrace(channels: number): void {
    this.trace = new TraceRing(channels, this.traceLength);
  }

  block(block: ServerBlock): void {
    if (this.trace === null || this.trace.channels !== block.data.length) this.resetTrace(block.data.length);
    this.trace!.push(block);
  }

  /** Encodes a spectrum frame (for one client, e.g. on connect, or for all). */
  spectrumFrame(s: ServerSnapshot, contextId: number): PooledFrame {
    const ch = s.channels;
    const bins = ch[0].psd.length;
    const f = this.pools.spectrum.acquire(frameBytes(ch.length, bins));
    const sampleRate = s.settings.sampleRate;
    encodeFrame(
      f.buffer,
      {
        kind: 'spectrum',
        seq: this.seq.spectrum++,
        channels: ch.length,
        contextId,
        length: bins,
        sample: s.sample,
        sampleRate,
        binHz: s.binHz,
      },
      ch.map((c) => c.equivalentAverages),
      ch.map((c) => c.psd),
    );
    return f;
  }

  baselineFrame(b: BaselineOverlay, contextId: number): PooledFrame {
    const bins = b.channels[0].psd.length;
    const f = this.pools.baseline.acquire(frameBytes(b.channels.length, bins));
    encodeFrame(
      f.buffer,
      {
        kind: 'baseline',
        seq: this.seq.baseline++,
        channels: b.channels.length,
        contextId,
        length: bins,
        sample: 0,
        sampleRate: b.settings.sampleRate,
        binHz: b.settings.sampleRate / b.settings.segment,
      },
      b.channels.map((c) => c.equivalentAverages),
      b.channels.map((c) => c.psd),
    );
    return f;
  }

  traceFrame(sampleRate: number): PooledFrame | null {
    if (this.trace === null || this.trace.lastSample < 0) return null;
    const { count, channels } = this.trace.snapshot();
    const f = this.pools.trace.acquire(frameBytes(channels.length, count));
    encodeFrame(
      f.buffer,
      {
        kind: 'trace',
        seq: this.seq.trace++,
        channels: channels.length,
        contextId: 0,
        length: count,
        sample: this.trace.lastSample,
        sampleRate,
        binHz: 0,
      },
      null,
      channels,
    );
    return f;
  }

  poolStats(): { created: number; free: number } {
    const p = Object.values(this.pools);
    return { created: p.reduce((a, x) => a + x.created, 0), free: p.reduce((a, x) => a + x.freeCount, 0) };
  }

  /** Offers a frame to every client and drops the caller's reference. */
  offer(kind: FrameKindName, frame: PooledFrame): void {
    for (const c of this.clients) c.offerFrame(kind, frame);
    frame.release();
  }
}
