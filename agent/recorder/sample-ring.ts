// The last N frames of every channel, so an event capture can start before its trigger. float32 storage: the
// pipeline's calibrated samples are already rounded to float32 (what recordings keep), so nothing is lost.
export class SampleRing {
  readonly capacity: number;
  private readonly data: Float32Array[];
  private write = 0; // next slot
  private count = 0;
  /** Absolute index of the sample after the newest one held (first sample expected next). */
  private end = 0;

  constructor(channels: number, capacity: number) {
    if (!Number.isInteger(channels) || channels < 1)
      throw new RangeError(`SampleRing: channels must be ≥ 1, got ${channels}`);
    if (!Number.isInteger(capacity) || capacity < 1)
      throw new RangeError(`SampleRing: capacity must be a positive integer of frames, got ${capacity}`);
    this.capacity = capacity;
    this.data = Array.from({ length: channels }, () => new Float32Array(capacity));
  }

  /** Absolute index of the oldest frame held (== nextSample when empty). */
  get oldestSample(): number {
    return this.end - this.count;
  }

  get nextSample(): number {
    return this.end;
  }

  /** Forgets everything (at a gap); the next push starts at `nextSample`. */
  restart(nextSample: number): void {
    this.count = 0;
    this.write = 0;
    this.end = nextSample;
  }

  /** Appends frames [0, frames) of each channel, which start at absolute index firstSample. */
  push(block: readonly Float64Array[], firstSample: number, frames: number): void {
    if (firstSample !== this.end) this.restart(firstSample);
    const cap = this.capacity;
    let from = 0;
    if (frames > cap) from = frames - cap; // only the newest `capacity` frames can stay
    for (let c = 0; c < this.data.length; c++) {
      const dst = this.data[c];
      const src = block[c];
      let w = (this.write + from) % cap;
      for (let i = from; i < frames; i++) {
        dst[w] = src[i];
        w = w + 1 === cap ? 0 : w + 1;
      }
    }
    this.write = (this.write + frames) % cap;
    this.count = Math.min(cap, this.count + frames);
    this.end = firstSample + frames;
  }

  /** Copies the held frames [fromSample, end) into out (one array per channel); returns how many frames. */
  copyFrom(fromSample: number, out: Float32Array[]): number {
    const start = Math.max(fromSample, this.oldestSample);
    const n = this.end - start;
    if (n <= 0) return 0;
    const cap = this.capacity;
    const first = (this.write - n + cap * 2) % cap;
    for (let c = 0; c < this.data.length; c++) {
      const src = this.data[c];
      const dst = out[c];
      let r = first;
      for (let i = 0; i < n; i++) {
        dst[i] = src[r];
        r = r + 1 === cap ? 0 : r + 1;
      }
    }
    return n;
  }
}
