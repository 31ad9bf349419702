// A worker's failure told through shared memory: a flag word, and the reason as UTF-8 right after the control
// words. The other thread may be blocked in Atomics.wait, where no message reaches it; this does.
export interface FailureWords {
  /** Control word set to 1 on failure. */
  flag: number;
  /** Control word holding the reason's length in bytes. */
  length: number;
  /** Control word the waiting thread sleeps on: notified on failure. */
  wake: number;
  /** Room for the reason after the control words. */
  bytes: number;
}

export class WorkerFailure {
  private readonly room: Uint8Array;
  constructor(
    private readonly control: Int32Array,
    private readonly words: FailureWords,
  ) {
    this.room = new Uint8Array(control.buffer, control.byteOffset + control.byteLength, words.bytes);
  }

  get failed(): boolean {
    return Atomics.load(this.control, this.words.flag) !== 0;
  }

  /** What the worker said when it flagged its failure ('' before). */
  get reason(): string {
    if (!this.failed) return '';
    const length = Atomics.load(this.control, this.words.length);
    // slice(): TextDecoder does not read views of shared memory.
    return new TextDecoder().decode(this.room.slice(0, length));
  }

  /** Flags the failure with its reason (cut to fit) and wakes a waiting thread. */
  raise(reason: string): void {
    const { written } = new TextEncoder().encodeInto(reason.slice(0, this.words.bytes / 4), this.room);
    Atomics.store(this.control, this.words.length, written);
    Atomics.store(this.control, this.words.flag, 1);
    Atomics.notify(this.control, this.words.wake);
  }
}
