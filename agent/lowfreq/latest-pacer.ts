// Passes on at most one value per `minIntervalMs` of wall time, the newest winning; a value held back is sent
// when the interval ends. Paces what goes to the dashboard only: what is computed stays a function of samples.
export class LatestPacer<T> {
  private lastSentAt = -Infinity;
  private waiting: { value: T } | null = null;
  private timer: ReturnType<typeof setTimeout> | null = null;
  /** Values replaced before they were sent. */
  skipped = 0;

  constructor(
    private readonly send: (value: T) => void,
    private readonly minIntervalMs: number,
    private readonly now: () => number = () => performance.now(),
  ) {
    if (!(minIntervalMs >= 0)) throw new RangeError(`pacer: minIntervalMs must be ≥ 0, got ${minIntervalMs}`);
  }

  offer(value: T): void {
    const wait = this.lastSentAt + this.minIntervalMs - this.now();
    if (wait <= 0 && this.timer === null) {
      this.lastSentAt = this.now();
      this.send(value);
      return;
    }
    if (this.waiting) this.skipped++;
    this.waiting = { value };
    if (this.timer === null) {
      this.timer = setTimeout(() => this.flush(), Math.max(0, wait));
      this.timer.unref?.();
    }
  }

  private flush(): void {
    this.timer = null;
    const w = this.waiting;
    this.waiting = null;
    if (!w) return;
    this.lastSentAt = this.now();
    this.send(w.value);
  }

  close(): void {
    if (this.timer !== null) clearTimeout(this.timer);
    this.timer = null;
    this.waiting = null;
  }
}
