// Reference-counted buffers for binary frames. ws `send()` does not copy a typed array, so a buffer may be
// reused only after every client's send of it has completed; the pool enforces that with a count per buffer.
export class PooledFrame {
  refs = 0;
  bytes = 0;
  constructor(
    readonly buffer: ArrayBuffer,
    private readonly pool: FramePool,
  ) {}

  retain(): this {
    if (this.refs <= 0) throw new Error('PooledFrame.retain: frame was already returned to its pool');
    this.refs++;
    return this;
  }

  release(): void {
    if (this.refs <= 0) throw new Error('PooledFrame.release: released more often than retained');
    if (--this.refs === 0) this.pool.giveBack(this);
  }

  /** The bytes to send (a view: no copy). */
  view(): Uint8Array {
    return new Uint8Array(this.buffer, 0, this.bytes);
  }
}

export class FramePool {
  private readonly free: PooledFrame[] = [];
  /** Buffers created so far (a test checks that reuse happens and stays bounded). */
  created = 0;

  constructor(private readonly keepFree = 8) {}

  /** A frame of at least `bytes` bytes with one reference held by the caller. */
  acquire(bytes: number): PooledFrame {
    let f: PooledFrame | undefined;
    for (let i = this.free.length - 1; i >= 0; i--) {
      if (this.free[i].buffer.byteLength >= bytes) {
        f = this.free[i];
        this.free.splice(i, 1);
        break;
      }
    }
    if (!f) {
      f = new PooledFrame(new ArrayBuffer(bytes), this);
      this.created++;
    }
    f.refs = 1;
    f.bytes = bytes;
    return f;
  }

  /** Called by PooledFrame when its last reference goes. */
  giveBack(f: PooledFrame): void {
    if (this.free.length < this.keepFree) {
      this.free.push(f);
      return;
    }
    // Full: keep the larger buffers (frames of one kind only grow, e.g. a trace while its ring fills).
    let smallest = 0;
    for (let i = 1; i < this.free.length; i++)
      if (this.free[i].buffer.byteLength < this.free[smallest].buffer.byteLength) smallest = i;
    if (this.free[smallest].buffer.byteLength < f.buffer.byteLength) this.free[smallest] = f;
  }

  get freeCount(): number {
    return this.free.length;
  }
}
