// A one-line progress bar on stderr, drawn only when stderr is a terminal (pipes and logs stay clean).
// Drawn through rawStderr(): its \r and erase sequence are ours, not text from outside.
// Redraws when the shown permille changes, so the cost does not depend on how often update() is called.
import { rawStderr } from './output-guard.ts';

export interface Progress {
  update(done: number, total: number): void;
  finish(): void;
}

interface TtyLike {
  isTTY?: boolean;
  columns?: number;
  write(text: string): unknown;
}

export function createProgress(label: string, stream: TtyLike = rawStderr()): Progress {
  if (!stream.isTTY) return { update() {}, finish() {} };
  let shown = -1;
  let drawn = false;
  return {
    update(done, total) {
      const permille = total > 0 ? Math.min(1000, Math.floor((done / total) * 1000)) : 1000;
      if (permille === shown) return;
      shown = permille;
      const width = Math.max(10, Math.min(40, (stream.columns ?? 80) - label.length - 12));
      const full = Math.round((permille / 1000) * width);
      stream.write(
        `\r${label} [${'#'.repeat(full)}${'.'.repeat(width - full)}] ${(permille / 10).toFixed(1).padStart(5)}%`,
      );
      drawn = true;
    },
    finish() {
      if (drawn) stream.write('\r\x1b[2K');
    },
  };
}
