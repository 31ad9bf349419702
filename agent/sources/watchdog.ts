// "No data" watchdog for a serial link. serialport 13 can miss a disconnect while data streams (docs/TOOLCHAIN.md:
// no close event, a core spinning), so the source closes the port itself: after ~1 s without data when the path
// has gone, or after N s without data regardless.
export type WatchdogVerdict = 'ok' | 'path-gone' | 'silent';

export class LinkWatchdog {
  private lastData = 0;

  constructor(
    readonly silentMs: number,
    readonly goneMs = 1000,
  ) {
    if (!(silentMs > 0)) throw new RangeError(`watchdog: the no-data limit must be > 0 s, got ${silentMs / 1000}`);
  }

  /** Call on every chunk of bytes (and when the port opens). */
  fed(now: number): void {
    this.lastData = now;
  }

  idleMs(now: number): number {
    return now - this.lastData;
  }

  check(now: number, pathExists: boolean): WatchdogVerdict {
    const idle = now - this.lastData;
    if (idle >= this.goneMs && !pathExists) return 'path-gone';
    if (idle >= this.silentMs) return 'silent';
    return 'ok';
  }
}
