// Channel Welch estimates on worker threads: channel c goes to worker c mod W. Each block is copied once into one
// of a few buffers per channel, which is transferred (not copied) to the worker and transferred back when
// analysed; with all of a channel's buffers out, push() waits, so memory stays bounded however fast the file reads.
import { Worker } from 'node:worker_threads';
import type { ChannelEstimatorPlan, ChannelResult, ChannelSpectra } from './channel-spectra.ts';
import type { ChannelWorkerData, FromChannelWorker, ToChannelWorker } from './channel-messages.ts';
import { workerScript } from './worker-script.ts';

/** Buffers in flight per channel: one being analysed, one queued, one being filled. */
export const BUFFERS_PER_CHANNEL = 3;

export class WorkerChannelSpectra implements ChannelSpectra {
  private readonly workers: Worker[];
  private readonly owner: number[];
  private readonly free: Float64Array[][];
  private readonly allocated: number[];
  private readonly waiting: ((() => void) | undefined)[];
  private readonly results: ChannelResult[] = [];
  private resultsPending: number;
  private failure: Error | undefined;
  private onResults: (() => void) | undefined;
  private closing = false;

  constructor(plan: ChannelEstimatorPlan, channels: number, threads: number) {
    const count = Math.max(1, Math.min(threads, channels));
    this.owner = Array.from({ length: channels }, (_, c) => c % count);
    this.free = Array.from({ length: channels }, () => []);
    this.allocated = new Array<number>(channels).fill(0);
    this.waiting = new Array(channels).fill(undefined);
    this.resultsPending = count;
    const script = workerScript('channel-worker.mjs');
    this.workers = Array.from({ length: count }, (_, w) => {
      const data: ChannelWorkerData = { plan, channels: this.owner.flatMap((o, c) => (o === w ? [c] : [])) };
      const worker = new Worker(script, { workerData: data });
      worker.on('message', (m: FromChannelWorker) => this.received(m));
      worker.on('error', (err) => this.fail(err));
      worker.on('exit', (code) => {
        if (code !== 0 && !this.closing) this.fail(new Error(`analysis worker ${w} stopped with exit code ${code}`));
      });
      return worker;
    });
  }

  /** Buffers allocated so far over all channels (at most BUFFERS_PER_CHANNEL each). */
  get buffersAllocated(): number {
    return this.allocated.reduce((a, b) => a + b, 0);
  }

  async push(data: readonly Float64Array[], frames: number): Promise<void> {
    for (let c = 0; c < this.owner.length; c++) {
      const buffer = await this.take(c, frames);
      buffer.set(data[c].subarray(0, frames));
      const m: ToChannelWorker = { kind: 'block', channel: c, frames, samples: buffer };
      this.workers[this.owner[c]].postMessage(m, [buffer.buffer as ArrayBuffer]);
    }
  }

  async finish(): Promise<ChannelResult[]> {
    this.check();
    const done = new Promise<void>((resolve) => (this.onResults = resolve));
    for (const w of this.workers) w.postMessage({ kind: 'finish' } satisfies ToChannelWorker);
    await done;
    this.check();
    await this.close();
    return this.results;
  }

  /** Stops the workers without waiting for results (after an error on the reading side). */
  async close(): Promise<void> {
    this.closing = true;
    await Promise.all(this.workers.map((w) => w.terminate()));
  }

  private async take(c: number, frames: number): Promise<Float64Array> {
    for (;;) {
      this.check();
      const buffer = this.free[c].pop();
      if (buffer && buffer.length >= frames) return buffer;
      if (buffer || this.allocated[c] < BUFFERS_PER_CHANNEL) {
        // A larger block than before replaces the buffer instead of adding one.
        if (!buffer) this.allocated[c]++;
        return new Float64Array(frames);
      }
      await new Promise<void>((resolve) => (this.waiting[c] = resolve));
    }
  }

  private received(m: FromChannelWorker): void {
    if (m.kind === 'free') {
      this.free[m.channel].push(m.samples);
      const wake = this.waiting[m.channel];
      this.waiting[m.channel] = undefined;
      wake?.();
      return;
    }
    for (const r of m.results)
      this.results[r.channel] = {
        psd: r.psd,
        segmentsUsed: r.segmentsUsed,
        segmentsExcluded: r.segmentsExcluded,
        equivalentAverages: r.equivalentAverages,
      };
    if (--this.resultsPending === 0) this.onResults?.();
  }

  private fail(err: Error): void {
    if (this.failure) return;
    this.failure = err;
    for (let c = 0; c < this.waiting.length; c++) {
      const wake = this.waiting[c];
      this.waiting[c] = undefined;
      wake?.();
    }
    this.onResults?.();
  }

  private check(): void {
    if (this.failure) throw new Error(`analysis worker failed: ${this.failure.message}`);
  }
}
