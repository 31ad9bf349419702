// The pipeline's analysis on a worker thread (analysis-worker.ts): the pipeline hands a block over and goes on with
// the detectors of the block before, while the worker runs the Welch estimators and cross-spectra of this one.
// One command is outstanding at a time; the pipeline collects a block's snapshots before it hands over the next.
// Waiting blocks the pipeline's thread (Atomics.wait), which is what paces a lossless replay by its slowest stage.
import { Worker } from 'node:worker_threads';
import { SnapshotFrame, type AnalysisChoice } from '../pipeline/analyser.ts';
import { welchStep } from '../../dsp/welch.ts';
import type { SpectrumSnapshot } from '../pipeline/types.ts';
import type { AveragingSpec } from '../../protocol/settings.ts';
import type { StreamInfo } from '../../protocol/stream.ts';
import {
  AnalysisViews,
  allocateAnalysis,
  CLEAR_AT,
  COMMAND,
  COMMAND_JSON_BYTES,
  DONE,
  PROCESS,
  QUIT,
  RECONFIGURE,
  RESTART_AT,
  snapshotStride,
  type AnalysisShape,
  type AnalysisWorkerData,
} from './analysis-layout.ts';
import { workerScript } from './worker-script.ts';

/** Largest block handed over at once (a replay reads 65536 frames at a time); longer blocks go in pieces. */
export const REMOTE_BLOCK_FRAMES = 65536;
/** Most memory the snapshots of one block may take in shared memory. */
const RESULTS_MAX_BYTES = 64 * 2 ** 20;
/** A worker that does not finish one command in this long is taken for dead. */
const STALL_MS = 120_000;

/** The shape of the shared memory for a stream and an analysis choice. */
export function analysisShape(
  info: StreamInfo,
  choice: AnalysisChoice,
  snapshotRate: number,
  pairs: number,
): AnalysisShape {
  const channels = info.channels.length;
  const bins = choice.segment / 2 + 1;
  const interval = Math.max(1, Math.round(info.sampleRate / snapshotRate));
  const every = Math.min(interval, welchStep(choice.segment, choice.overlap));
  const stride = snapshotStride({ channels, pairs, bins, blockFrames: 1, snapshots: 1 });
  const fit = Math.max(2, Math.floor(RESULTS_MAX_BYTES / (stride * 8)));
  const blockFrames = Math.max(1, Math.min(REMOTE_BLOCK_FRAMES, (fit - 1) * every));
  return { channels, pairs, bins, blockFrames, snapshots: Math.ceil(blockFrames / every) + 1 };
}

export class RemoteAnalyser {
  private readonly views: AnalysisViews;
  private readonly worker: Worker;
  private readonly stride: number;
  private frame: SnapshotFrame;
  private sent = 0;
  private exited: string | undefined;
  private closed = false;

  constructor(
    private readonly info: StreamInfo,
    choice: AnalysisChoice,
    averaging: AveragingSpec,
    private readonly snapshotRate: number,
    startSample: number,
    private readonly pairs: [number, number][],
  ) {
    const shared = allocateAnalysis(analysisShape(info, choice, snapshotRate, pairs.length));
    this.views = new AnalysisViews(shared);
    this.stride = snapshotStride(shared);
    this.frame = new SnapshotFrame(info, choice, averaging, pairs);
    const workerData: AnalysisWorkerData = { shared, info, choice, averaging, snapshotRate, startSample, pairs };
    this.worker = new Worker(workerScript('analysis-worker.mjs'), { workerData });
    this.worker.on('error', (err) => (this.exited ??= err.message));
    this.worker.on('exit', (code) => (this.exited ??= `it stopped with exit code ${code}`));
    this.worker.unref();
  }

  /** The largest block one handOver takes. */
  get blockFrames(): number {
    return this.views.shared.blockFrames;
  }

  /** Hands data[c][from, from+frames) (absolute indices firstSample…) over; frames ≤ blockFrames. */
  handOver(data: readonly Float64Array[], from: number, firstSample: number, frames: number): void {
    this.idle();
    const samples = this.views.samples;
    for (let c = 0; c < samples.length; c++) samples[c].set(data[c].subarray(from, from + frames));
    this.send(PROCESS, firstSample, frames);
  }

  /** The snapshot instants of the block handed over last: calls fn(numbers, at) for each, in order. Waits for it. */
  collect(fn: (numbers: Float64Array, at: number) => void): void {
    this.idle();
    const results = this.views.results;
    const count = results[0];
    results[0] = 0;
    for (let i = 0; i < count; i++) fn(results, 1 + i * this.stride);
  }

  /** The settings the snapshots carry. */
  get settings(): SnapshotFrame['settings'] {
    return this.frame.settings;
  }

  /** The snapshot whose numbers collect() handed to its callback. */
  snapshot(numbers: Float64Array, at: number, wallTime: string, sequence: number): SpectrumSnapshot {
    return this.frame.read(numbers, at, wallTime, sequence);
  }

  restartAt(nextSample: number): void {
    this.idle();
    this.send(RESTART_AT, nextSample);
  }

  clearAt(nextSample: number, origin: number): void {
    this.idle();
    this.send(CLEAR_AT, nextSample, origin);
  }

  /** A new analysis from startSample on (the worker builds a new Analyser; the shape stays). */
  reconfigure(choice: AnalysisChoice, averaging: AveragingSpec, startSample: number): void {
    if (!this.fits(choice)) throw new RangeError('remote analysis: the new settings need a new worker');
    this.idle();
    const bytes = new TextEncoder().encode(JSON.stringify({ choice, averaging }));
    if (bytes.length > COMMAND_JSON_BYTES) throw new RangeError('remote analysis: settings too long');
    this.views.json.set(bytes);
    this.frame = new SnapshotFrame(this.info, choice, averaging, this.pairs);
    this.send(RECONFIGURE, startSample, 0, 0, bytes.length);
  }

  /** Whether new settings fit this worker's memory (otherwise the pipeline starts another). */
  fits(choice: AnalysisChoice): boolean {
    const shape = analysisShape(this.info, choice, this.snapshotRate, this.pairs.length);
    const own = this.views.shared;
    return shape.bins === own.bins && shape.blockFrames <= own.blockFrames && shape.snapshots <= own.snapshots;
  }

  close(): void {
    if (this.closed) return;
    this.closed = true;
    if (this.exited === undefined && !this.views.failed) {
      try {
        this.idle();
        this.send(QUIT);
      } catch {
        // Already failed: terminate below.
      }
    }
    void this.worker.terminate();
  }

  private send(kind: number, a = 0, b = 0, c = 0, d = 0): void {
    const n = this.views.numbers;
    n[0] = kind;
    n[1] = a;
    n[2] = b;
    n[3] = c;
    n[4] = d;
    this.sent = (this.sent + 1) | 0;
    Atomics.store(this.views.control, COMMAND, this.sent);
    Atomics.notify(this.views.control, COMMAND);
  }

  /** Returns once the worker has finished the last command; throws, naming the cause, if it failed or died. */
  private idle(): void {
    const control = this.views.control;
    const since = performance.now();
    for (;;) {
      if (this.closed && this.views.numbers[0] === QUIT)
        throw new Error('analysis worker: used after the stream ended');
      if (this.views.failed) throw new Error(`analysis worker failed: ${this.views.reason}`);
      const done = Atomics.load(control, DONE);
      if (done === this.sent) return;
      if (performance.now() - since > STALL_MS)
        throw new Error(`analysis worker gave no answer in ${STALL_MS / 1000} s; run with --threads 1`);
      // An exit is only seen by the event loop; a worker that dies without flagging shows as the stall above.
      Atomics.wait(control, DONE, done, 100);
    }
  }
}
