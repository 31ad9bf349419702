// A bounded FIFO of raw sample blocks between a live source and the analysis. Slots are preallocated and reused
// (their arrays grow only when a larger block arrives), so a steady stream allocates nothing. When the queue is
// full the incoming block is refused whole: the caller counts it as dropped, never queues without limit.
import type { SampleBlock } from '../../protocol/stream.ts';

export interface QueuedBlock {
  firstSample: number;
  frames: number;
  data: Float64Array[];
}

export class BlockQueue {
  private readonly slots: QueuedBlock[];
  private head = 0;
  private count = 0;

  constructor(
    readonly capacity: number,
    readonly channels: number,
  ) {
    if (!Number.isInteger(capacity) || capacity < 1)
      throw new RangeError(`BlockQueue: capacity must be an integer ≥ 1, got ${capacity}`);
    if (!Number.isInteger(channels) || channels < 1)
      throw new RangeError(`BlockQueue: channels must be an integer ≥ 1, got ${channels}`);
    this.slots = [];
    for (let i = 0; i < capacity; i++) {
      const data: Float64Array[] = [];
      for (let c = 0; c < channels; c++) data.push(new Float64Array(0));
      this.slots.push({ firstSample: 0, frames: 0, data });
    }
  }

  get length(): number {
    return this.count;
  }

  /** Copies the block into a free slot; false (and nothing copied) when the queue is full. */
  push(block: SampleBlock): boolean {
    if (this.count === this.capacity) return false;
    const slot = this.slots[(this.head + this.count) % this.capacity];
    const frames = block.frames;
    for (let c = 0; c < this.channels; c++) {
      if (slot.data[c].length < frames) slot.data[c] = new Float64Array(Math.max(frames, slot.data[c].length * 2));
      slot.data[c].set(block.data[c].subarray(0, frames));
    }
    slot.firstSample = block.firstSample;
    slot.frames = frames;
    this.count++;
    return true;
  }

  /** The oldest block, still owned by the queue until release(). */
  peek(): QueuedBlock | undefined {
    return this.count === 0 ? undefined : this.slots[this.head];
  }

  release(): void {
    if (this.count === 0) return;
    this.head = (this.head + 1) % this.capacity;
    this.count--;
  }
}
