// Writes a document handed out in parts (joined by newlines) to a file through a small buffer, so a large report
// is never one string in memory. It goes to NAME.partial first and takes its name on close: a report that fails
// midway leaves no half-written file under the name asked for (and an older report there stays whole).
import { closeSync, openSync, renameSync, rmSync, writeSync } from 'node:fs';

const FLUSH_BYTES = 1 << 16;

export class PartWriter {
  private readonly partial: string;
  private fd: number;
  private buffered: string[] = [];
  private size = 0;
  private parts = 0;

  constructor(private readonly path: string) {
    this.partial = `${path}.partial`;
    this.fd = openSync(this.partial, 'w');
  }

  write(part: string): void {
    if (this.parts++ > 0) this.buffered.push('\n');
    this.buffered.push(part);
    this.size += part.length + 1;
    if (this.size >= FLUSH_BYTES) this.flush();
  }

  close(): void {
    this.flush();
    closeSync(this.fd);
    renameSync(this.partial, this.path);
  }

  discard(): void {
    closeSync(this.fd);
    rmSync(this.partial, { force: true });
  }

  private flush(): void {
    if (this.buffered.length) writeSync(this.fd, this.buffered.join(''));
    this.buffered = [];
    this.size = 0;
  }
}
