// One writer per store: a lock file beside it holding the writer's PID. A second agent pointed at the same store
// is refused with the first one's PID; a lock left by a process that no longer exists is taken over.
import { closeSync, openSync, readFileSync, unlinkSync, writeSync } from 'node:fs';
import { FloorlineError } from '../errors.ts';

export class StoreLockedError extends FloorlineError {
  override readonly name = 'StoreLockedError';
  constructor(
    message: string,
    readonly pid: number,
  ) {
    super('STORE_LOCKED', message);
  }
}

export interface StoreLock {
  path: string;
  release(): void;
}

function alive(pid: number): boolean {
  try {
    process.kill(pid, 0);
    return true;
  } catch (err) {
    return (err as NodeJS.ErrnoException).code === 'EPERM';
  }
}

function holder(path: string): { pid: number; command?: string; started?: string } | undefined {
  try {
    const o = JSON.parse(readFileSync(path, 'utf8')) as { pid?: unknown; command?: unknown; started?: unknown };
    return typeof o.pid === 'number' && Number.isInteger(o.pid)
      ? { pid: o.pid, command: String(o.command ?? ''), started: String(o.started ?? '') }
      : undefined;
  } catch {
    return undefined;
  }
}

/** Takes `${store}.lock` for this process; throws StoreLockedError naming the live holder's PID. */
export function lockStore(store: string, command: string): StoreLock {
  const path = `${store}.lock`;
  for (let attempt = 0; attempt < 3; attempt++) {
    let fd: number;
    try {
      fd = openSync(path, 'wx');
    } catch (err) {
      if ((err as NodeJS.ErrnoException).code !== 'EEXIST') throw err;
      const h = holder(path);
      if (h && h.pid !== process.pid && alive(h.pid)) {
        throw new StoreLockedError(
          `the history store ${store} is in use by another agent (PID ${h.pid}${h.command ? `, floorline ${h.command}` : ''}` +
            `${h.started ? `, since ${h.started}` : ''}); stop that agent, or give this one another --data DIR (or --store FILE).`,
          h.pid,
        );
      }
      // Stale (its process is gone) or unreadable (a crash while writing it): take it over.
      try {
        unlinkSync(path);
      } catch {
        /* another starter removed it first */
      }
      continue;
    }
    writeSync(fd, JSON.stringify({ pid: process.pid, command, started: new Date().toISOString() }) + '\n');
    closeSync(fd);
    let released = false;
    return {
      path,
      release: () => {
        if (released) return;
        released = true;
        if (holder(path)?.pid === process.pid) unlinkSync(path);
      },
    };
  }
  throw new StoreLockedError(
    `cannot take the lock ${path}: other agents keep replacing it; start one agent per data folder.`,
    -1,
  );
}
