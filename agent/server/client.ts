// One dashboard connection. Binary frames are latest-wins per kind: while one is being sent, a newer frame
// replaces the waiting one and the replaced frame is counted as skipped, so a slow client never slows the agent
// and never grows a queue; frames of one kind are also paced to a display rate. JSON messages (replies, events, status) are small and always sent in order.
import type { WebSocket } from 'ws';
import type { ServerMessage } from '../../protocol/messages.ts';
import type { FrameKindName } from '../../protocol/frame.ts';
import type { PooledFrame } from './frame-pool.ts';

interface Lane {
  inFlight: PooledFrame | null;
  waiting: PooledFrame | null;
  /** performance.now() of the last send; frames are paced to minIntervalMs (display pacing, wall clock). */
  lastSentAt: number;
  timer: ReturnType<typeof setTimeout> | null;
}

export class ClientConnection {
  framesSent = 0;
  framesSkipped = 0;
  /** Heartbeat pings sent since the last pong. */
  unansweredPings = 0;
  /** Why the agent dropped this client (a policy close), or null: reported once, when it goes. */
  droppedFor: string | null = null;
  private closed = false;
  private readonly lanes = new Map<FrameKindName, Lane>();

  constructor(
    readonly id: number,
    private readonly ws: WebSocket,
    private readonly maxBufferedBytes: number,
    /** Least time between two frames of one kind: a replay at 8× or max makes spectra far faster than a screen shows them. */
    private readonly minIntervalMs = 0,
  ) {}

  sendJson(message: ServerMessage): void {
    if (this.closed || this.ws.readyState !== this.ws.OPEN) return;
    if (this.ws.bufferedAmount > this.maxBufferedBytes) {
      this.droppedFor = `too slow: send buffer ${(this.ws.bufferedAmount / 1048576).toFixed(1)} MiB over the ${(this.maxBufferedBytes / 1048576).toFixed(1)} MiB limit`;
      this.close(1008, 'client too slow: send buffer over limit');
      return;
    }
    this.ws.send(JSON.stringify(message));
  }

  /** Offers a frame; the connection retains it until sent or replaced. */
  offerFrame(kind: FrameKindName, frame: PooledFrame): void {
    if (this.closed || this.ws.readyState !== this.ws.OPEN) return;
    let lane = this.lanes.get(kind);
    if (!lane) {
      lane = { inFlight: null, waiting: null, lastSentAt: -Infinity, timer: null };
      this.lanes.set(kind, lane);
    }
    frame.retain();
    const wait = lane.lastSentAt + this.minIntervalMs - performance.now();
    if (lane.inFlight === null && lane.waiting === null && wait <= 0) {
      this.transmit(lane, frame);
      return;
    }
    if (lane.waiting !== null) {
      lane.waiting.release();
      this.framesSkipped++;
    }
    lane.waiting = frame;
    if (lane.inFlight === null && lane.timer === null) this.schedule(lane, wait);
  }

  private schedule(lane: Lane, ms: number): void {
    lane.timer = setTimeout(
      () => {
        lane.timer = null;
        const next = lane.waiting;
        if (next === null || lane.inFlight !== null) return;
        lane.waiting = null;
        if (this.closed || this.ws.readyState !== this.ws.OPEN) next.release();
        else this.transmit(lane, next);
      },
      Math.max(0, ms),
    );
  }

  private transmit(lane: Lane, frame: PooledFrame): void {
    lane.inFlight = frame;
    lane.lastSentAt = performance.now();
    this.ws.send(frame.view(), { binary: true }, () => {
      // Called once the bytes left for the socket (or the send failed): only now may the buffer be reused.
      frame.release();
      lane.inFlight = null;
      if (!this.closed) this.framesSent++;
      if (lane.waiting === null) return;
      if (this.closed || this.ws.readyState !== this.ws.OPEN) {
        lane.waiting.release();
        lane.waiting = null;
        return;
      }
      const ms = lane.lastSentAt + this.minIntervalMs - performance.now();
      if (ms > 0) this.schedule(lane, ms);
      else {
        const next = lane.waiting;
        lane.waiting = null;
        this.transmit(lane, next);
      }
    });
  }

  close(code: number, reason: string): void {
    if (this.closed) return;
    this.release();
    this.ws.close(code, reason);
  }

  /** Drops waiting frames (the in-flight one is released by its send callback). */
  release(): void {
    this.closed = true;
    for (const lane of this.lanes.values()) {
      if (lane.timer !== null) clearTimeout(lane.timer);
      lane.timer = null;
      lane.waiting?.release();
      lane.waiting = null;
    }
  }

  ping(): void {
    if (!this.closed && this.ws.readyState === this.ws.OPEN) this.ws.ping();
  }

  terminate(): void {
    this.droppedFor ??= 'no answer to the heartbeat pings';
    this.release();
    this.ws.terminate();
  }
}
