// Event log: appends each event as one JSON Lines record to every target (the data folder's events.jsonl and
// --events-out), written through with a synchronous write per event so a crash loses no reported event.
import { closeSync, mkdirSync, openSync, writeSync } from 'node:fs';
import { dirname } from 'node:path';
import { eventToJsonLine, type FloorlineEvent } from '../../protocol/events.ts';
import { InputError } from '../cli/usage-error.ts';

export class EventLog {
  private readonly fds: number[] = [];
  readonly paths: readonly string[];
  written = 0;

  /** Opens every path for appending (creating parent folders). */
  constructor(paths: readonly string[]) {
    this.paths = [...new Set(paths)];
    for (const p of this.paths) {
      try {
        mkdirSync(dirname(p), { recursive: true });
        this.fds.push(openSync(p, 'a'));
      } catch (err) {
        this.close();
        throw new InputError(`event log ${p}: cannot open it for appending (${(err as Error).message}); choose a writable path.`);
      }
    }
  }

  write(e: FloorlineEvent): void {
    const line = eventToJsonLine(e) + '\n';
    for (const fd of this.fds) writeSync(fd, line);
    this.written++;
  }

  writeAll(events: readonly FloorlineEvent[]): void {
    for (const e of events) this.write(e);
  }

  close(): void {
    for (const fd of this.fds.splice(0)) closeSync(fd);
  }
}
