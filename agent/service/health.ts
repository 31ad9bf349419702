// Liveness for a supervisor (GET /healthz): healthy while samples keep arriving and analysis keeps up. The checks
// use the wall clock on purpose: they are about the process, not about the signal.
import type { Pipeline } from '../pipeline/pipeline.ts';

export interface HealthVerdict {
  ok: boolean;
  reason: string;
}

export interface HealthOptions {
  /** No block for this long → unhealthy (default 3000 ms; a board sends many blocks a second). */
  staleMs?: number;
  /** A dropped block within this long → unhealthy: analysis is not keeping up (default 10 000 ms). */
  dropWindowMs?: number;
}

export class HealthWatch {
  private lastBlockMs = 0;
  private lastDropMs = 0;
  private dropped = 0;
  private ended = false;
  private readonly staleMs: number;
  private readonly dropWindowMs: number;

  constructor(
    private readonly pipeline: Pipeline,
    o: HealthOptions = {},
  ) {
    this.staleMs = o.staleMs ?? 3000;
    this.dropWindowMs = o.dropWindowMs ?? 10_000;
    pipeline.on('block', () => (this.lastBlockMs = performance.now()));
    pipeline.on('end', () => (this.ended = true));
  }

  check(now = performance.now()): HealthVerdict {
    const c = this.pipeline.counters();
    if (c.droppedBlocks > this.dropped) {
      this.dropped = c.droppedBlocks;
      this.lastDropMs = now;
    }
    if (this.ended) return { ok: false, reason: 'the source has ended' };
    if (this.lastBlockMs === 0) return { ok: false, reason: 'no samples yet' };
    const idle = now - this.lastBlockMs;
    if (idle > this.staleMs) return { ok: false, reason: `no samples for ${(idle / 1000).toFixed(1)} s` };
    if (this.lastDropMs > 0 && now - this.lastDropMs < this.dropWindowMs) {
      return {
        ok: false,
        reason: `analysis is falling behind: ${c.droppedBlocks} block(s) dropped, the last ${((now - this.lastDropMs) / 1000).toFixed(1)} s ago`,
      };
    }
    if (c.queueCapacity > 0 && c.queueDepth > c.queueCapacity / 2) {
      return { ok: false, reason: `analysis is falling behind: ${c.queueDepth} of ${c.queueCapacity} blocks queued` };
    }
    return { ok: true, reason: `samples arriving, analysis keeping up (${c.queueDepth} block(s) queued)` };
  }
}
