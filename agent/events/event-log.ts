// Event log: appends each event as one JSON Lines record to every target (the data folder's events.jsonl and
// --events-out), written through with a synchronous write per event so a crash loses no reported event.
// Each target fails on its own: a full disk under one never silences another. A write that fails part-way is cut
// back to the last whole line, so the file only ever holds whole lines; the events a failing target missed are
// held (bounded) and written, in order, once it accepts writes again. A torn last line left by a crash is cut off
// when the log opens. A target that grows past maxBytes is rotated (NAME → NAME.1 → … → NAME.keep).
import {
  closeSync,
  fstatSync,
  ftruncateSync,
  mkdirSync,
  openSync,
  readSync,
  renameSync,
  rmSync,
  writeSync,
} from 'node:fs';
import { dirname } from 'node:path';
import { eventToJsonLine, type FloorlineEvent } from '../../protocol/events.ts';
import { InputError } from '../errors.ts';

export interface EventLogOptions {
  /** Bytes after which a target is rotated (default 16 MiB); Infinity = never. */
  maxBytes?: number;
  /** Rotated files kept per target (default 4): at most (keep + 1) × maxBytes on disk. */
  keep?: number;
  /** Lines held in memory for a target that cannot be written (default 10 000); older ones are dropped, counted. */
  holdLines?: number;
  /** Where problems and recoveries are reported (default stderr). */
  warn?: (message: string) => void;
}

interface Target {
  path: string;
  fd: number;
  size: number;
  held: string[];
  dropped: number;
  error: string | null;
  rotates: boolean;
}

/** Cuts a torn last line (no final newline) off an open file; returns the new size. */
function cutTornTail(fd: number): number {
  const size = fstatSync(fd).size;
  if (size === 0) return 0;
  const chunk = Buffer.alloc(Math.min(size, 64 * 1024));
  let end = size;
  while (end > 0) {
    const n = Math.min(chunk.length, end);
    readSync(fd, chunk, 0, n, end - n);
    const at = chunk.subarray(0, n).lastIndexOf(0x0a);
    if (at >= 0) {
      const keep = end - n + at + 1;
      if (keep !== size) ftruncateSync(fd, keep);
      return keep;
    }
    end -= n;
  }
  ftruncateSync(fd, 0);
  return 0;
}

export class EventLog {
  private readonly targets: Target[] = [];
  readonly paths: readonly string[];
  written = 0;
  private readonly maxBytes: number;
  private readonly keep: number;
  private readonly holdLines: number;
  private readonly warn: (message: string) => void;

  /** Opens every path for appending (creating parent folders). */
  constructor(paths: readonly string[], options: EventLogOptions = {}) {
    this.paths = [...new Set(paths)];
    this.maxBytes = options.maxBytes ?? 16 * 1024 * 1024;
    this.keep = options.keep ?? 4;
    this.holdLines = options.holdLines ?? 10_000;
    this.warn = options.warn ?? ((m) => process.stderr.write(`floorline: ${m}\n`));
    for (const path of this.paths) {
      try {
        mkdirSync(dirname(path), { recursive: true });
        const fd = openSync(path, 'a+');
        this.targets.push({ path, fd, size: cutTornTail(fd), held: [], dropped: 0, error: null, rotates: true });
      } catch (err) {
        this.close();
        throw new InputError(
          `event log ${path}: cannot open it for appending (${(err as Error).message}); choose a writable path.`,
        );
      }
    }
  }

  /** Targets that are failing now, with the reason and how many events they hold. */
  problems(): { path: string; error: string; held: number; dropped: number }[] {
    return this.targets
      .filter((t) => t.error !== null)
      .map((t) => ({ path: t.path, error: t.error!, held: t.held.length, dropped: t.dropped }));
  }

  /** Never throws: a target that cannot be written holds the line and is retried with the next event. */
  write(e: FloorlineEvent): void {
    const line = eventToJsonLine(e) + '\n';
    for (const t of this.targets) this.writeTo(t, line);
    this.written++;
  }

  writeAll(events: readonly FloorlineEvent[]): void {
    for (const e of events) this.write(e);
  }

  close(): void {
    for (const t of this.targets.splice(0)) {
      if (t.held.length)
        this.warn(`event log ${t.path}: ${t.held.length} events could not be written (${t.error}); they are lost.`);
      closeSync(t.fd);
    }
  }

  private writeTo(t: Target, line: string): void {
    if (t.error !== null) {
      t.held.push(line);
      if (t.held.length > this.holdLines) {
        t.held.shift();
        t.dropped++;
      }
      this.retry(t);
      return;
    }
    if (!this.append(t, line)) t.held.push(line);
  }

  /** Writes the held lines in order; true when all went out (the target is healthy again). */
  private retry(t: Target): boolean {
    while (t.held.length) {
      if (!this.append(t, t.held[0], true)) return false;
      t.held.shift();
    }
    const dropped = t.dropped;
    t.dropped = 0;
    const reason = t.error;
    t.error = null;
    this.warn(
      `event log ${t.path}: writing again after "${reason}"${dropped ? `; ${dropped} older events could not be held and are missing` : ''}.`,
    );
    return true;
  }

  /** One whole line, or nothing: a partial write is cut back. */
  private append(t: Target, line: string, retrying = false): boolean {
    const bytes = Buffer.from(line, 'utf8');
    if (t.rotates && t.size + bytes.length > this.maxBytes && t.size > 0) this.rotate(t);
    let done = 0;
    try {
      while (done < bytes.length) done += writeSync(t.fd, bytes, done, bytes.length - done);
      t.size += bytes.length;
      return true;
    } catch (err) {
      try {
        if (done > 0) ftruncateSync(t.fd, t.size);
      } catch {
        // the torn tail is cut when the log next opens
      }
      const reason = (err as NodeJS.ErrnoException).code ?? (err as Error).message;
      if (t.error === null && !retrying)
        this.warn(
          `event log ${t.path}: cannot write (${reason}); holding events in memory and retrying with each new one.`,
        );
      t.error = reason;
      return false;
    }
  }

  private rotate(t: Target): void {
    try {
      rmSync(`${t.path}.${this.keep}`, { force: true });
      for (let i = this.keep - 1; i >= 1; i--) {
        try {
          renameSync(`${t.path}.${i}`, `${t.path}.${i + 1}`);
        } catch {
          // that generation does not exist yet
        }
      }
      if (this.keep >= 1) renameSync(t.path, `${t.path}.1`);
      else rmSync(t.path, { force: true });
      closeSync(t.fd);
      t.fd = openSync(t.path, 'a+');
      t.size = 0;
    } catch (err) {
      t.rotates = false;
      this.warn(`event log ${t.path}: cannot rotate (${(err as Error).message}); it keeps growing.`);
    }
  }
}
