// Shared memory between the pipeline and its analysis worker (agent/workers/analysis-worker.ts): one command at a
// time, the samples of one block, and the snapshots that block produced. The pipeline writes a command, bumps
// COMMAND and goes on; the worker runs it and bumps DONE. Only one command is outstanding, so every area has a
// single owner at any moment: the pipeline before it bumps COMMAND and after it has seen DONE, the worker between.
import type { AnalysisChoice } from '../pipeline/analyser.ts';
import type { AveragingSpec } from '../../protocol/settings.ts';
import type { StreamInfo } from '../../protocol/stream.ts';
import { WorkerFailure } from './worker-failure.ts';

export const COMMAND = 0;
export const DONE = 1;
export const FAILED = 2;
export const REASON_LENGTH = 3;
export const CONTROL_WORDS = 4;
export const REASON_BYTES = 2048;

/** Command kinds (first number of the command area). */
export const PROCESS = 1;
export const RESTART_AT = 2;
export const CLEAR_AT = 3;
export const RECONFIGURE = 4;
export const QUIT = 5;

/** Numbers of the command area: kind, then up to three arguments, then the length of a JSON argument. */
export const COMMAND_NUMBERS = 5;
export const COMMAND_JSON_BYTES = 16 * 1024;

/** Per snapshot: its sample, then per channel (segmentsUsed, segmentsTotal, equivalentAverages,
 *  lastSegmentSample), then the pairs' segmentsUsed and equivalentAverages; the arrays follow. */
export const CHANNEL_NUMBERS = 4;

/** What shapes the memory: the stream's channels, the bins of a spectrum and the largest block. */
export interface AnalysisShape {
  channels: number;
  pairs: number;
  bins: number;
  blockFrames: number;
  /** Snapshots one block can produce at most (ceil(blockFrames / min(interval, step)) + 1). */
  snapshots: number;
}

export interface SharedAnalysis extends AnalysisShape {
  control: SharedArrayBuffer;
  command: SharedArrayBuffer;
  samples: SharedArrayBuffer;
  results: SharedArrayBuffer;
}

export interface AnalysisWorkerData {
  shared: SharedAnalysis;
  info: StreamInfo;
  choice: AnalysisChoice;
  averaging: AveragingSpec;
  snapshotRate: number;
  startSample: number;
  pairs: [number, number][];
}

/** Numbers one snapshot takes in the results area. */
export function snapshotStride(s: AnalysisShape): number {
  return 1 + s.channels * CHANNEL_NUMBERS + 2 + (s.channels + 3 * s.pairs) * s.bins;
}

export function allocateAnalysis(shape: AnalysisShape): SharedAnalysis {
  return {
    ...shape,
    control: new SharedArrayBuffer(CONTROL_WORDS * 4 + REASON_BYTES),
    command: new SharedArrayBuffer(COMMAND_NUMBERS * 8 + COMMAND_JSON_BYTES),
    samples: new SharedArrayBuffer(shape.channels * shape.blockFrames * 8),
    // A count, then the snapshots.
    results: new SharedArrayBuffer((1 + shape.snapshots * snapshotStride(shape)) * 8),
  };
}

/** The views both sides read and write through. */
export class AnalysisViews {
  readonly control: Int32Array;
  readonly numbers: Float64Array;
  readonly json: Uint8Array;
  readonly samples: Float64Array[];
  readonly results: Float64Array;
  private readonly failure: WorkerFailure;
  constructor(readonly shared: SharedAnalysis) {
    this.control = new Int32Array(shared.control, 0, CONTROL_WORDS);
    this.failure = new WorkerFailure(this.control, {
      flag: FAILED,
      length: REASON_LENGTH,
      wake: DONE,
      bytes: REASON_BYTES,
    });
    this.numbers = new Float64Array(shared.command, 0, COMMAND_NUMBERS);
    this.json = new Uint8Array(shared.command, COMMAND_NUMBERS * 8, COMMAND_JSON_BYTES);
    const all = new Float64Array(shared.samples);
    this.samples = Array.from({ length: shared.channels }, (_, c) =>
      all.subarray(c * shared.blockFrames, (c + 1) * shared.blockFrames),
    );
    this.results = new Float64Array(shared.results);
  }

  get failed(): boolean {
    return this.failure.failed;
  }

  get reason(): string {
    return this.failure.reason;
  }

  fail(reason: string): void {
    this.failure.raise(reason);
  }
}
