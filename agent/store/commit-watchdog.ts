// Watches that the history store goes on committing while samples arrive. A store that stops committing without
// a storage fault (its part cut off after an error, its commit timer starved) would otherwise keep nothing from
// then on and say nothing more. Checked on sample arrival, beside the store's own timer, on the wall clock (it is
// about the process, not the signal). Told once per stall, with the file and what to do; counted for status.

import type { StoreStatus } from '../../protocol/messages.ts';

/** Wall ms without a commit, while rows wait, before the store is called stalled (default). */
export const DEFAULT_STALL_MS = 10_000;

export interface WatchedWriter {
  /** performance.now() of the last commit (or of opening the store). */
  readonly lastCommitMs: number;
  /** Date.now() of the last commit (null: none yet). */
  readonly lastCommitWallMs: number | null;
  readonly pending: number;
  readonly storing: boolean;
}

export class CommitWatchdog {
  private stalls = 0;
  private stalled = false;

  constructor(
    private readonly writer: WatchedWriter,
    private readonly o: {
      file: string;
      stallMs?: number;
      /** Told at a stall (`true`) and when commits resume (`false`). */
      report: (detail: string, stalled: boolean) => void;
    },
  ) {}

  /** Called as samples arrive. */
  check(now = performance.now()): void {
    const w = this.writer;
    const limit = this.o.stallMs ?? DEFAULT_STALL_MS;
    const idle = now - w.lastCommitMs;
    if (this.stalled) {
      if (idle > limit) return;
      this.stalled = false;
      this.o.report(`history store ${this.o.file} commits again`, false);
      return;
    }
    // A refusing disk is told by the writer itself, with its retries; nothing waiting is nothing lost.
    if (!w.storing || w.pending === 0 || idle <= limit) return;
    this.stalled = true;
    this.stalls++;
    this.o.report(
      `history store ${this.o.file} has not committed for ${(idle / 1000).toFixed(1)} s while samples arrive ` +
        `(${w.pending} rows waiting): history is not being kept. Restart the agent (what was committed is kept); ` +
        `if it happens again, look for an earlier message of the store, and for another process holding ${this.o.file} (fuser ${this.o.file}).`,
      true,
    );
  }

  status(): StoreStatus {
    const w = this.writer;
    return {
      file: this.o.file,
      storing: w.storing,
      lastCommit: w.lastCommitWallMs === null ? null : new Date(w.lastCommitWallMs).toISOString(),
      pending: w.pending,
      stalled: this.stalled,
      commitStalls: this.stalls,
    };
  }
}
