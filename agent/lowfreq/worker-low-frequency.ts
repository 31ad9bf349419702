// The live low-frequency view on worker threads: channel c goes to worker c mod W, each worker runs the same
// LiveLowFrequency on its channels (agent/workers/lowfreq-worker.ts), and the workers' frames are merged back in
// channel order. Every worker sees every block, gap and stream start in pipeline order, so the merged contexts
// and updates equal a one-thread run's, only later. Blocks go through a few slots of shared memory per worker:
// in lossless mode a full pool makes the agent wait (the replay is paced by the view), in bounded mode (live) the
// block is left out of the view for every worker and counted, and the view restarts after the hole as after a gap.
// A worker that fails stops the view, once, with a message; the monitor goes on without it.
import { Worker } from 'node:worker_threads';
import type { GapNotice, StreamInfo } from '../../protocol/stream.ts';
import type {
  LowFrequencyContext,
  LowFrequencyStatus,
  LowFrequencyUpdate,
} from '../../protocol/low-frequency-messages.ts';
import type { BlockFeed, LiveLowFrequencyOptions } from './live-low-frequency.ts';
import type { LowFrequencyView } from './view.ts';
import { allocateBlockSlots, SlotWriter } from '../workers/block-slots.ts';
import type {
  FromLowFrequencyWorker,
  LowFrequencyWorkerData,
  ToLowFrequencyWorker,
} from '../workers/lowfreq-messages.ts';
import { workerScript } from '../workers/worker-script.ts';
import { FrameMerger } from './frame-merger.ts';
import { FrameListeners } from './frame-listeners.ts';

export interface WorkerLowFrequencyOptions {
  threads: number;
  mode: 'lossless' | 'bounded';
  view?: LiveLowFrequencyOptions;
  /** Told once when the view stops because a worker failed. */
  onFailure: (message: string) => void;
  /** Slots per worker and frames per slot; longer blocks are cut into slot-sized pieces. Defaults: 4 × 65536 in
   * lossless mode (a replay's whole blocks), 32 × 8192 in bounded mode (a live run's short blocks, ~2 s deep). */
  slots?: number;
  slotFrames?: number;
  /** A lossless wait for a slot longer than this means the worker stopped answering (default 60 s). */
  stallMs?: number;
}

interface ViewWorker {
  worker: Worker;
  /** Stream channel indices it owns, in order. */
  channels: number[];
  slots: SlotWriter;
  status: LowFrequencyStatus[];
  done: Promise<void>;
}

export class WorkerLowFrequency implements LowFrequencyView {
  private workers: ViewWorker[] = [];
  private merger: FrameMerger | undefined;
  private readonly out = new FrameListeners();
  private failure: string | undefined;
  private readonly slotCount: number;
  private readonly slotFrames: number;
  private closing = false;
  /** Blocks (slot-sized pieces) left out of the view because its workers were behind (bounded mode only). */
  droppedBlocks = 0;

  constructor(private readonly o: WorkerLowFrequencyOptions) {
    if (!Number.isInteger(o.threads) || o.threads < 1)
      throw new RangeError(`low-frequency view: threads must be an integer ≥ 1, got ${o.threads}`);
    this.slotCount = o.slots ?? (o.mode === 'lossless' ? 4 : 32);
    this.slotFrames = o.slotFrames ?? (o.mode === 'lossless' ? 65536 : 8192);
  }

  attach(feed: BlockFeed): this {
    feed.on('info', (i) => this.start(i));
    feed.on('block', (b) => this.block(b.firstSample, b.frames, b.data));
    feed.on('gap', (g) => this.gap(g));
    return this;
  }

  onContext(fn: (c: LowFrequencyContext) => void): () => void {
    return this.out.onContext(fn);
  }

  onUpdate(fn: (u: LowFrequencyUpdate) => void): () => void {
    return this.out.onUpdate(fn);
  }

  context(): LowFrequencyContext | null {
    return this.out.ctx;
  }

  latest(): LowFrequencyUpdate | null {
    return this.out.last;
  }

  /** Per channel, as of each worker's newest update, start or gap (empty once the view has failed). */
  status(): LowFrequencyStatus[] {
    if (this.failure) return [];
    const out: LowFrequencyStatus[] = [];
    for (const w of this.workers) w.channels.forEach((c, k) => w.status[k] && (out[c] = w.status[k]));
    return out.filter((s) => s !== undefined);
  }

  get failed(): string | undefined {
    return this.failure;
  }

  async close(): Promise<void> {
    if (this.closing) return;
    this.closing = true;
    const workers = this.workers;
    if (!this.failure) {
      for (const w of workers) this.post(w, { kind: 'finish' });
      await Promise.all(workers.map((w) => w.done));
    }
    await Promise.all(workers.map((w) => w.worker.terminate()));
  }

  private start(info: StreamInfo): void {
    if (this.failure || this.closing) return;
    const channels = info.channels.length;
    if (this.workers.length === 0 || this.workers.reduce((n, w) => n + w.channels.length, 0) !== channels)
      this.spawn(channels);
    for (const w of this.workers)
      this.post(w, {
        kind: 'info',
        sampleRate: info.sampleRate,
        firstSample: info.firstSample,
        channels: w.channels.map((c) => ({ name: info.channels[c].name, unit: info.channels[c].unit })),
      });
  }

  /** Workers for `channels` channels; a stream with another channel count replaces them (frames in flight are lost). */
  private spawn(channels: number): void {
    for (const w of this.workers) void w.worker.terminate();
    const count = Math.max(1, Math.min(this.o.threads, channels));
    const script = workerScript('lowfreq-worker.mjs');
    this.merger = new FrameMerger(
      count,
      channels,
      (c) => this.out.context(c),
      (u) => this.out.update(u),
    );
    this.workers = Array.from({ length: count }, (_, index) => {
      const owned = Array.from({ length: channels }, (_, c) => c).filter((c) => c % count === index);
      const shared = allocateBlockSlots({
        slots: this.slotCount,
        channels: owned.length,
        slotFrames: this.slotFrames,
      });
      const data: LowFrequencyWorkerData = { view: this.o.view ?? {}, slots: shared };
      const worker = new Worker(script, { workerData: data });
      let finished!: () => void;
      const w: ViewWorker = {
        worker,
        channels: owned,
        slots: new SlotWriter(shared),
        status: [],
        done: new Promise<void>((resolve) => (finished = resolve)),
      };
      const merger = this.merger!;
      // A worker replaced by a new stream's is no longer heard.
      const current = (): boolean => this.workers.includes(w);
      worker.on('message', (m: FromLowFrequencyWorker) => {
        if (!current()) return;
        if (m.kind === 'status') w.status = m.status;
        else if (m.kind === 'context' || m.kind === 'update') {
          const problem = merger.add(index, m, owned);
          if (problem) this.fail(problem);
        } else if (m.kind === 'done') finished();
        else this.fail(`worker ${index} failed: ${m.message.split('\n')[0]}`);
      });
      worker.on('error', (err) => current() && this.fail(`worker ${index} failed: ${err.message}`));
      worker.on('exit', (code) => {
        if (current() && !this.closing) this.fail(`worker ${index} stopped (exit code ${code})`);
        finished();
      });
      return w;
    });
  }

  private block(firstSample: number, frames: number, data: readonly Float64Array[]): void {
    if (this.failure || this.closing || this.workers.length === 0) return;
    const piece = this.slotFrames;
    const lossless = this.o.mode === 'lossless';
    for (let at = 0; at < frames; at += piece) {
      const n = Math.min(piece, frames - at);
      if (!lossless && !this.workers.every((w) => w.slots.hasFree)) {
        // Live: never wait; every worker leaves the same piece out, so their frames stay aligned.
        this.droppedBlocks++;
        continue;
      }
      for (const w of this.workers) {
        const slot = w.slots.next(lossless ? (this.o.stallMs ?? 60_000) : 0);
        if (slot < 0) {
          this.fail(
            w.slots.failed
              ? `worker ${this.workers.indexOf(w)} failed: ${w.slots.reason}`
              : `a worker stopped taking blocks (no free slot for ${this.o.stallMs ?? 60_000} ms)`,
          );
          return;
        }
        const views = w.slots.slot(slot);
        for (let k = 0; k < w.channels.length; k++) views[k].set(data[w.channels[k]].subarray(at, at + n));
        w.slots.commit();
        this.post(w, { kind: 'block', slot, firstSample: firstSample + at, frames: n });
      }
    }
  }

  private gap(gap: GapNotice): void {
    if (this.failure || this.closing) return;
    for (const w of this.workers) this.post(w, { kind: 'gap', gap });
  }

  private post(w: ViewWorker, m: ToLowFrequencyWorker): void {
    w.worker.postMessage(m);
  }

  private fail(reason: string): void {
    if (this.failure || this.closing) return;
    this.failure = reason;
    for (const w of this.workers) void w.worker.terminate();
    this.o.onFailure(`low-frequency view stopped: ${reason}; spectra, alarms and recording go on without it`);
  }
}
