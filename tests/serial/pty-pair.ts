// Real pseudo-terminal pairs from socat, and the simulator CLI, for the serial integration tests.
import { spawn, type ChildProcess } from 'node:child_process';
import { existsSync, rmSync } from 'node:fs';
import { join } from 'node:path';
import type { SampleBlock, SourceSink, StreamInfo, GapNotice, LinkNotice } from '../../protocol/stream.ts';

const root = new URL('../..', import.meta.url).pathname;

export const sleep = (ms: number): Promise<void> => new Promise((r) => setTimeout(r, ms));

export async function waitFor(what: string, cond: () => boolean, timeoutMs = 10000): Promise<void> {
  const t0 = Date.now();
  while (!cond()) {
    if (Date.now() - t0 > timeoutMs) throw new Error(`timed out after ${timeoutMs} ms waiting for ${what}`);
    await sleep(20);
  }
}

export class PtyPair {
  private proc: ChildProcess | undefined;
  constructor(
    readonly board: string,
    readonly host: string,
  ) {}

  async start(): Promise<void> {
    // Links left dangling by a killed socat would make the new one fail to create them.
    rmSync(this.board, { force: true });
    rmSync(this.host, { force: true });
    this.proc = spawn('socat', ['-d', '-d', `pty,raw,echo=0,link=${this.board}`, `pty,raw,echo=0,link=${this.host}`], {
      stdio: 'ignore',
    });
    await waitFor('socat pty links', () => existsSync(this.board) && existsSync(this.host), 5000);
  }

  async kill(): Promise<void> {
    const p = this.proc;
    this.proc = undefined;
    if (!p || p.exitCode !== null) return;
    const exited = new Promise((r) => p.once('exit', r));
    p.kill('SIGKILL');
    await exited;
    // socat removes its links on a clean exit only; after SIGKILL they dangle (existsSync follows them: false).
  }
}

export function startSimulator(args: string[]): {
  proc: ChildProcess;
  exited: Promise<number | null>;
  stderr: () => string;
} {
  const proc = spawn(process.execPath, [join(root, 'bin/floorline.mjs'), 'simulate', ...args], {
    stdio: ['ignore', 'ignore', 'pipe'],
  });
  let err = '';
  proc.stderr!.on('data', (d: Buffer) => (err += d.toString()));
  const exited = new Promise<number | null>((r) => proc.once('exit', (code) => r(code)));
  return { proc, exited, stderr: () => err };
}

/** A SourceSink that keeps everything, copying blocks into per-channel arrays by sample index. */
export class CollectingSink implements SourceSink {
  infos: StreamInfo[] = [];
  gaps: GapNotice[] = [];
  links: LinkNotice[] = [];
  ended = false;
  data: Float64Array[] = [];
  /** 1 where a sample index was delivered. */
  seen: Uint8Array;
  delivered = 0;
  lastIndex = -1;
  outOfOrder = 0;

  constructor(readonly capacity: number) {
    this.seen = new Uint8Array(capacity);
  }

  info(info: StreamInfo): void {
    this.infos.push(info);
    if (this.data.length === 0) this.data = info.channels.map(() => new Float64Array(this.capacity));
  }
  block(b: SampleBlock): void {
    if (b.firstSample <= this.lastIndex) this.outOfOrder++;
    this.lastIndex = b.firstSample + b.frames - 1;
    const n = Math.min(b.frames, this.capacity - b.firstSample);
    for (let c = 0; c < this.data.length; c++) this.data[c].set(b.data[c].subarray(0, n), b.firstSample);
    this.seen.fill(1, b.firstSample, b.firstSample + n);
    this.delivered += b.frames;
  }
  gap(g: GapNotice): void {
    this.gaps.push(g);
  }
  link(l: LinkNotice): void {
    this.links.push(l);
  }
  end(): void {
    this.ended = true;
  }
}
