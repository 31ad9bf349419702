// Keeps the newest samples of every channel for the dashboard's time trace (copied out of the pipeline's
// reused block arrays). Per-block work allocates nothing.
import type { ServerBlock } from './backend.ts';

export class TraceRing {
  private readonly rings: Float64Array[];
  private write = 0;
  private filled = 0;
  /** Index of the newest sample held, -1 before the first block. */
  lastSample = -1;
  private readonly ordered: Float64Array[];

  constructor(
    channels: number,
    readonly length: number,
  ) {
    if (!Number.isInteger(channels) || channels < 1)
      throw new RangeError(`TraceRing: channels must be a positive integer, got ${channels}`);
    if (!Number.isInteger(length) || length < 1)
      throw new RangeError(`TraceRing: length must be a positive integer, got ${length}`);
    this.rings = Array.from({ length: channels }, () => new Float64Array(length));
    this.ordered = Array.from({ length: channels }, () => new Float64Array(length));
  }

  get channels(): number {
    return this.rings.length;
  }

  push(block: ServerBlock): void {
    const n = this.length;
    const frames = block.frames;
    const skip = frames > n ? frames - n : 0;
    let w = this.write;
    for (let c = 0; c < this.rings.length; c++) {
      const ring = this.rings[c];
      const src = block.data[c];
      w = this.write;
      for (let i = skip; i < frames; i++) {
        ring[w] = src[i];
        w = w + 1 === n ? 0 : w + 1;
      }
    }
    this.write = w;
    this.filled = Math.min(n, this.filled + frames - skip);
    this.lastSample = block.firstSample + frames - 1;
  }

  /** Samples held, oldest first; views valid until the next call. Fewer than `length` until the ring fills. */
  snapshot(): { count: number; channels: Float64Array[] } {
    const n = this.length;
    const count = this.filled;
    const start = (this.write - count + n) % n;
    for (let c = 0; c < this.rings.length; c++) {
      const ring = this.rings[c];
      const out = this.ordered[c];
      for (let i = 0, r = start; i < count; i++, r = r + 1 === n ? 0 : r + 1) out[i] = ring[r];
    }
    return { count, channels: this.ordered };
  }
}
