// The outgoing side of a low-frequency view: its newest context and update, and who is told of new ones.
import type { LowFrequencyContext, LowFrequencyUpdate } from '../../protocol/low-frequency-messages.ts';

export class FrameListeners {
  ctx: LowFrequencyContext | null = null;
  last: LowFrequencyUpdate | null = null;
  private readonly contextListeners = new Set<(c: LowFrequencyContext) => void>();
  private readonly updateListeners = new Set<(u: LowFrequencyUpdate) => void>();

  onContext(fn: (c: LowFrequencyContext) => void): () => void {
    this.contextListeners.add(fn);
    return () => this.contextListeners.delete(fn);
  }

  onUpdate(fn: (u: LowFrequencyUpdate) => void): () => void {
    this.updateListeners.add(fn);
    return () => this.updateListeners.delete(fn);
  }

  /** A new context: updates of the old one are no longer the latest. */
  context(c: LowFrequencyContext): void {
    this.ctx = c;
    this.last = null;
    for (const fn of this.contextListeners) fn(c);
  }

  update(u: LowFrequencyUpdate): void {
    this.last = u;
    for (const fn of this.updateListeners) fn(u);
  }
}
