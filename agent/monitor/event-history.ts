// The newest events of the run, for clients that connect later: a bounded ring, oldest first.
import type { FloorlineEvent } from '../../protocol/events.ts';

export class EventHistory {
  private readonly items: FloorlineEvent[] = [];

  constructor(private readonly capacity = 1000) {}

  add(e: FloorlineEvent): void {
    this.items.push(e);
    if (this.items.length > this.capacity) this.items.splice(0, this.items.length - this.capacity);
  }

  /** Newest events, oldest first, at most `limit`. */
  recent(limit: number): FloorlineEvent[] {
    return this.items.slice(-limit);
  }

  /** Newest first, stopping at the first one `fn` accepts. */
  findLast(fn: (e: FloorlineEvent) => boolean): FloorlineEvent | undefined {
    for (let i = this.items.length - 1; i >= 0; i--) if (fn(this.items[i])) return this.items[i];
    return undefined;
  }
}
