// A fixed pool of sample slots in shared memory between the agent's thread and one worker: the agent copies a
// block's channels into the next free slot and posts only its index; the worker reads the slot in place and
// releases it. Slots are used and released in ring order, so two counters say which are free. The agent can wait
// for a free slot without its event loop (Atomics.wait), which paces a lossless replay by the worker; memory is
// slots × channels × slotFrames doubles however fast blocks come.
import { WorkerFailure } from './worker-failure.ts';

/** Control words: slots released by the worker, slots filled by the agent, the worker's failure flag, the
 * length of its reason, which follows as UTF-8 (readable while the agent's event loop is blocked), and whether
 * the agent is waiting (the worker wakes it only then: a wake is a system call). */
const RELEASED = 0;
const FILLED = 1;
const FAILED = 2;
const REASON_LENGTH = 3;
const WAITING = 4;
const WORDS = 5;
const REASON_BYTES = 1024;

export interface BlockSlotsShape {
  slots: number;
  channels: number;
  slotFrames: number;
}

export interface SharedBlockSlots extends BlockSlotsShape {
  control: SharedArrayBuffer;
  samples: SharedArrayBuffer;
}

export function allocateBlockSlots(shape: BlockSlotsShape): SharedBlockSlots {
  const { slots, channels, slotFrames } = shape;
  for (const [name, v] of Object.entries(shape))
    if (!Number.isInteger(v) || v < 1) throw new RangeError(`block slots: ${name} must be an integer ≥ 1, got ${v}`);
  return {
    ...shape,
    control: new SharedArrayBuffer(WORDS * 4 + REASON_BYTES),
    samples: new SharedArrayBuffer(slots * channels * slotFrames * 8),
  };
}

class SlotViews {
  protected readonly control: Int32Array;
  protected readonly failure: WorkerFailure;
  private readonly views: Float64Array[][];
  constructor(readonly shared: SharedBlockSlots) {
    this.control = new Int32Array(shared.control, 0, WORDS);
    this.failure = new WorkerFailure(this.control, {
      flag: FAILED,
      length: REASON_LENGTH,
      wake: RELEASED,
      bytes: REASON_BYTES,
    });
    const all = new Float64Array(shared.samples);
    const { slots, channels, slotFrames } = shared;
    this.views = Array.from({ length: slots }, (_, s) =>
      Array.from({ length: channels }, (_, c) =>
        all.subarray((s * channels + c) * slotFrames, (s * channels + c + 1) * slotFrames),
      ),
    );
  }
  /** The channels of one slot (each slotFrames long). */
  slot(index: number): Float64Array[] {
    return this.views[index];
  }
  get failed(): boolean {
    return this.failure.failed;
  }
  /** What the worker said when it flagged its failure. */
  get reason(): string {
    return this.failure.reason;
  }
}

/** The agent's side: fills slots in ring order. */
export class SlotWriter extends SlotViews {
  private filled = 0;
  private at = 0;

  /** Slots filled and not yet released. */
  get inUse(): number {
    return (this.filled - Atomics.load(this.control, RELEASED)) | 0;
  }

  get hasFree(): boolean {
    return this.inUse < this.shared.slots;
  }

  /**
   * Index of the next slot once one is free, waiting up to waitMs (0: do not wait); -1 when none became free in
   * time or the worker has flagged a failure (check `failed`).
   */
  next(waitMs: number): number {
    const until = performance.now() + waitMs;
    for (;;) {
      if (this.failed) return -1;
      const released = Atomics.load(this.control, RELEASED);
      if (((this.filled - released) | 0) < this.shared.slots) return this.at;
      const left = until - performance.now();
      if (left <= 0) return -1;
      // Woken by a release or a failure; short slices so a worker that died without a word is noticed by the caller.
      // A release between the load above and the wait changes RELEASED, so the wait returns at once.
      Atomics.store(this.control, WAITING, 1);
      Atomics.wait(this.control, RELEASED, released, Math.min(left, 100));
      Atomics.store(this.control, WAITING, 0);
    }
  }

  /** The slot returned by next() is filled: publish it (before posting its index). */
  commit(): void {
    this.filled = (this.filled + 1) | 0;
    this.at = (this.at + 1) % this.shared.slots;
    Atomics.store(this.control, FILLED, this.filled);
  }
}

/** The worker's side: reads slots as their messages arrive and releases them in the same order. */
export class SlotReader extends SlotViews {
  /** The channels of a posted slot; the fill is visible once FILLED is read. */
  read(index: number): Float64Array[] {
    Atomics.load(this.control, FILLED);
    return this.slot(index);
  }

  release(): void {
    Atomics.add(this.control, RELEASED, 1);
    if (Atomics.load(this.control, WAITING) !== 0) Atomics.notify(this.control, RELEASED);
  }

  /** Wakes a waiting agent and tells it this worker is gone, and why. */
  fail(reason: string): void {
    this.failure.raise(reason);
  }
}
