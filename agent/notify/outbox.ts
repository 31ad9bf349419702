// The notification outbox: a small append-only journal in the data folder (notify-outbox.jsonl), so every
// notification is delivered at least once, across retries and restarts. One JSON line per change:
//   {"op":"add","id","sink","body","due","tries"}   a notification to deliver
//   {"op":"try","id","due","tries","error"}        an attempt failed; next attempt not before `due` (epoch ms)
//   {"op":"done","id"} / {"op":"drop","id"}        delivered / given up
// On open the journal is replayed and rewritten with only the pending entries (compaction), so it stays small.
import { closeSync, existsSync, fsyncSync, openSync, readFileSync, renameSync, writeSync } from 'node:fs';

export interface OutboxEntry {
  id: string;
  /** Index of the sink in the config's notify list. */
  sink: number;
  /** The JSON body to deliver (event JSON plus id and incident). */
  body: Record<string, unknown>;
  /** Epoch ms before which no attempt is made. */
  due: number;
  tries: number;
}

type Record_ =
  | ({ op: 'add' } & OutboxEntry)
  | { op: 'try'; id: string; due: number; tries: number; error?: string }
  | { op: 'done' | 'drop'; id: string };

export class Outbox {
  private readonly pending = new Map<string, OutboxEntry>();
  private fd: number;
  /** Lines in the journal that no longer describe a pending entry; compaction runs past a threshold. */
  private stale = 0;

  constructor(private readonly path: string) {
    if (existsSync(path)) this.replay(readFileSync(path, 'utf8'));
    this.fd = this.rewrite();
  }

  private replay(text: string): void {
    for (const line of text.split('\n')) {
      if (!line.trim()) continue;
      let r: Record_;
      try {
        r = JSON.parse(line) as Record_;
      } catch {
        continue; // a line cut short by a crash: the entry it would have changed is still pending, so it is retried
      }
      if (r.op === 'add') this.pending.set(r.id, { id: r.id, sink: r.sink, body: r.body, due: r.due, tries: r.tries });
      else if (r.op === 'try') {
        const e = this.pending.get(r.id);
        if (e) Object.assign(e, { due: r.due, tries: r.tries });
      } else this.pending.delete(r.id);
    }
  }

  /** Writes the pending entries to a fresh journal and swaps it in (atomic rename); returns the append fd. */
  private rewrite(): number {
    const tmp = `${this.path}.tmp`;
    const fd = openSync(tmp, 'w');
    for (const e of this.pending.values()) writeSync(fd, JSON.stringify({ op: 'add', ...e }) + '\n');
    fsyncSync(fd);
    closeSync(fd);
    renameSync(tmp, this.path);
    this.stale = 0;
    return openSync(this.path, 'a');
  }

  private append(r: Record_): void {
    if (this.fd < 0) return; // closed: the entry stays pending in the journal, so it is delivered again (at least once)
    writeSync(this.fd, JSON.stringify(r) + '\n');
  }

  add(e: OutboxEntry): void {
    this.pending.set(e.id, { ...e });
    this.append({ op: 'add', ...e });
  }

  retryLater(id: string, due: number, tries: number, error: string): void {
    const e = this.pending.get(id);
    if (!e) return;
    e.due = due;
    e.tries = tries;
    this.append({ op: 'try', id, due, tries, error: error.slice(0, 200) });
    this.stale++;
  }

  finish(id: string, how: 'done' | 'drop'): void {
    if (!this.pending.delete(id)) return;
    this.append({ op: how, id });
    this.stale += 2;
    if (this.fd >= 0 && this.stale > 1000 && this.stale > 4 * this.pending.size) {
      closeSync(this.fd);
      this.fd = this.rewrite();
    }
  }

  /** Pending entries whose time has come, oldest first. */
  due(now: number): OutboxEntry[] {
    const out: OutboxEntry[] = [];
    for (const e of this.pending.values()) if (e.due <= now) out.push(e);
    return out;
  }

  get size(): number {
    return this.pending.size;
  }

  /** Epoch ms of the earliest pending attempt, or undefined when nothing is pending. */
  nextDue(): number | undefined {
    let min: number | undefined;
    for (const e of this.pending.values()) if (min === undefined || e.due < min) min = e.due;
    return min;
  }

  /** Makes the journal durable (called at shutdown). */
  close(): void {
    if (this.fd < 0) return;
    const fd = this.fd;
    this.fd = -1;
    try {
      fsyncSync(fd);
    } finally {
      closeSync(fd);
    }
  }
}
