// A token bucket: `rate` actions per second on average, bursts of up to `burst`. Wall clock (performance.now),
// since it paces people and programs, not samples.
export class TokenBucket {
  private tokens: number;
  private last: number;

  constructor(
    private readonly rate: number,
    private readonly burst: number,
    now = performance.now(),
  ) {
    this.tokens = burst;
    this.last = now;
  }

  /** Takes one token if there is one. */
  take(now = performance.now()): boolean {
    this.tokens = Math.min(this.burst, this.tokens + ((now - this.last) / 1000) * this.rate);
    this.last = now;
    if (this.tokens < 1) return false;
    this.tokens -= 1;
    return true;
  }

  /** Milliseconds until the next token. */
  waitMs(): number {
    return this.tokens >= 1 ? 0 : Math.ceil(((1 - this.tokens) / this.rate) * 1000);
  }
}

/** The process's soft limit on open files (from /proc/self/limits), or undefined where that is not readable. */
export function openFileLimit(read: () => string): number | undefined {
  try {
    const m = /^Max open files\s+(\d+|unlimited)/m.exec(read());
    if (!m || m[1] === 'unlimited') return undefined;
    return Number(m[1]);
  } catch {
    return undefined;
  }
}
