// Continuous recording (with rotation, continuous sample indices across files) and pre/post event captures, fed
// by the pipeline's calibrated blocks. Files are float32 WAV + sidecar in the data folder's recordings/.
// A write failure (disk full, no permission) never stops acquisition: the recording is marked failed, an event
// says so, analysis carries on. Every open file is flushed (samples written, header sizes patched, fdatasync)
// every flushMs of wall time, and its samples and sizes are also handed to the kernel after every writeOutSeconds
// of sample time. The second bound does not depend on the timer getting to run: on a loaded machine the event
// loop may be late, but blocks still arrive one at a time, so a killed process loses at most writeOutSeconds of
// samples plus one block.
import { readdirSync, rmSync, statSync } from 'node:fs';
import { join, relative } from 'node:path';
import type { FloorlineEvent } from '../../protocol/events.ts';
import type { StreamInfo } from '../../protocol/stream.ts';
import type { DataFolder } from '../config/data-folder.ts';
import type { Pipeline } from '../pipeline/pipeline.ts';
import type { CalibratedBlock } from '../pipeline/types.ts';
import { WavWriter, type WavWriterMetadata } from '../wav/writer.ts';
import { recordingFileName, safeLabel } from './file-naming.ts';
import { SampleRing } from './sample-ring.ts';

export interface RecorderOptions {
  /** File name prefix of continuous recordings (default "rec"). */
  prefix?: string;
  /** Start a new file every this many seconds of sample time (default 3600); 0 = never (RF64 past 4 GiB). */
  rotateSeconds?: number;
  /** Or when a file would pass this many data bytes (default none). */
  rotateBytes?: number;
  /** Seconds of sample time a capture keeps before its trigger (default 10) and after it (default 10). */
  preSeconds?: number;
  postSeconds?: number;
  /** Extra seconds the ring holds beyond preSeconds (default 5): an alarm decides some time after the samples
   * that raised it (segment length, on-delay), and its capture must still reach preSeconds before the trigger. */
  decisionSeconds?: number;
  /** Wall-clock flush interval, ms (default 500), with fdatasync: what a power cut can lose. */
  flushMs?: number;
  /** Sample-time bound, seconds (default 0.5): samples and header sizes are written out (no fdatasync) at least
   * this often in sample time, so a killed process loses at most this much plus one block. */
  writeOutSeconds?: number;
  /** fdatasync on flush (default true). */
  durable?: boolean;
  /** After a full disk, wall-clock ms between attempts to record again (default 2000). */
  retryMs?: number;
  /** Most bytes all capture files in recordings/ may hold (default 1 GiB, counting those already there); beyond
   * it no new capture starts and one event says so. Captures exist only for incidents, so this bounds a long run. */
  captureQuotaBytes?: number;
  notes?: string;
}

export interface RecordingStatus {
  state: 'off' | 'recording' | 'failed';
  /** Current (or last) file, relative to the data folder. */
  file?: string;
  error?: string;
  /** Files of this recording so far (rotation, gaps), relative to the data folder. */
  files: string[];
  framesWritten: number;
}

export interface CaptureHandle {
  /** Relative to the data folder: known at once, so an event can name it. */
  file: string;
  /** Absolute index of the first sample the capture holds. */
  firstSample: number;
  /** Resolves with the frames written when the capture is complete (post-trigger span, a gap, or the end). */
  done: Promise<{ file: string; frames: number }>;
}

interface OpenFile {
  writer: WavWriter;
  file: string;
  firstSample: number;
}

interface ActiveCapture extends OpenFile {
  endSample: number; // last sample to include
  /** What triggered it (incident and channel): only a later alarm of the same label extends it. */
  label: string;
  promise: Promise<{ file: string; frames: number }>;
  resolve: (r: { file: string; frames: number }) => void;
  reject: (e: Error) => void;
}

function isDiskFull(err: Error): boolean {
  const code = (err as Error & { code?: string }).code;
  return code === 'WAV_DISK_FULL' || code === 'ENOSPC' || code === 'EDQUOT';
}

function removeRecording(path: string): void {
  for (const p of [path, `${path}.json`]) rmSync(p, { force: true });
}

export class Recorder {
  private readonly prefix: string;
  private readonly rotateSeconds: number;
  private readonly rotateBytes: number;
  private readonly preSeconds: number;
  private readonly postSeconds: number;
  private readonly durable: boolean;
  private readonly writeOutSeconds: number;
  private framesSinceWriteOut = 0;
  private readonly decisionSeconds: number;
  private pipeline: Pipeline | undefined;
  private info: StreamInfo | undefined;
  private ring: SampleRing | undefined;
  private scratch: Float32Array[] = [];
  private wanted = false;
  private current: OpenFile | undefined;
  private readonly rec: RecordingStatus = { state: 'off', files: [], framesWritten: 0 };
  private readonly captures: ActiveCapture[] = [];
  private readonly timer: NodeJS.Timeout;
  private nextSample = 0;
  /** After a full disk: wall time (ms) of the next attempt to record again, and the first sample missed. */
  private retryAt = -1;
  private missedFrom = -1;
  private readonly retryMs: number;
  private readonly captureQuotaBytes: number;
  private captureBytes = -1;
  private quotaReported = false;
  /** Labels (incident and channel) that already have a capture: one capture per incident, not per alarm edge. */
  private readonly captured = new Map<string, string>();
  private readonly unsubscribe: (() => void)[] = [];

  constructor(
    readonly folder: DataFolder,
    options: RecorderOptions = {},
  ) {
    this.prefix = safeLabel(options.prefix ?? 'rec');
    this.rotateSeconds = options.rotateSeconds ?? 3600;
    this.rotateBytes = options.rotateBytes ?? Infinity;
    this.preSeconds = options.preSeconds ?? 10;
    this.postSeconds = options.postSeconds ?? 10;
    this.durable = options.durable ?? true;
    this.decisionSeconds = options.decisionSeconds ?? 5;
    this.retryMs = options.retryMs ?? 2000;
    this.captureQuotaBytes = options.captureQuotaBytes ?? 1024 ** 3;
    for (const [k, v] of [
      ['rotateSeconds', this.rotateSeconds],
      ['preSeconds', this.preSeconds],
      ['postSeconds', this.postSeconds],
      ['decisionSeconds', this.decisionSeconds],
    ] as const) {
      if (!(v >= 0) || !Number.isFinite(v))
        throw new RangeError(`Recorder: ${k} must be a number of seconds ≥ 0, got ${v}`);
    }
    if (!(this.rotateBytes > 0))
      throw new RangeError(`Recorder: rotateBytes must be positive, got ${this.rotateBytes}`);
    this.writeOutSeconds = options.writeOutSeconds ?? 0.5;
    if (!(this.writeOutSeconds > 0) || !Number.isFinite(this.writeOutSeconds)) {
      throw new RangeError(
        `Recorder: writeOutSeconds must be a positive number of seconds, got ${options.writeOutSeconds}`,
      );
    }
    this.timer = setInterval(() => this.flushAll(), options.flushMs ?? 500);
    this.timer.unref();
  }

  /** Subscribes to the pipeline's stream; call once. */
  attach(pipeline: Pipeline): void {
    this.pipeline = pipeline;
    this.unsubscribe.push(
      pipeline.on('info', (i) => this.onInfo(i), 'recorder'),
      pipeline.on('block', (b) => this.onBlock(b), 'recorder'),
      pipeline.on('gap', (g) => this.onGap(g.sample + g.lost), 'recorder'),
      pipeline.on('end', () => this.closeAll(), 'recorder'),
    );
    if (pipeline.stream) this.onInfo(pipeline.stream);
  }

  /** Starts continuous recording (from the next block on). */
  startRecording(): RecordingStatus {
    this.wanted = true;
    if (this.rec.state !== 'recording') {
      this.rec.state = 'recording';
      this.rec.error = undefined;
      this.rec.files = [];
      this.rec.framesWritten = 0;
      this.rec.file = undefined;
    }
    return this.status();
  }

  stopRecording(): RecordingStatus {
    this.wanted = false;
    this.retryAt = -1;
    this.closeCurrent();
    if (this.rec.state === 'recording') this.rec.state = 'off';
    return this.status();
  }

  status(): RecordingStatus {
    return { ...this.rec, files: [...this.rec.files] };
  }

  /** Captures preSeconds before triggerSample to postSeconds after it into its own file. */
  capture(triggerSample: number, label: string): CaptureHandle {
    const info = this.info;
    const ring = this.ring;
    if (!info || !ring || !this.pipeline)
      throw new Error('Recorder.capture: no stream yet; attach the recorder and start the source first');
    const rate = info.sampleRate;
    const endSample = triggerSample + Math.round(this.postSeconds * rate);
    // A later alarm of the same incident and channel inside a capture still being written extends it; another
    // incident gets a file named after itself, even when the spans overlap.
    const running = this.captures.find(
      (c) => c.label === label && c.endSample >= triggerSample && c.firstSample <= triggerSample,
    );
    if (running) {
      running.endSample = Math.max(running.endSample, endSample);
      return { file: running.file, firstSample: running.firstSample, done: running.promise };
    }
    // The same incident again (a re-raise after the capture closed): it already has its file.
    const earlier = this.captured.get(label);
    if (earlier !== undefined)
      return { file: earlier, firstSample: -1, done: Promise.resolve({ file: earlier, frames: 0 }) };
    if (this.captureBytesNow() + this.captureCost(triggerSample) > this.captureQuotaBytes) {
      if (!this.quotaReported) {
        this.quotaReported = true;
        this.report(
          `capture quota reached: capture files hold ${Math.round(this.captureBytesNow() / 2 ** 20)} MiB of the ${Math.round(this.captureQuotaBytes / 2 ** 20)} MiB allowed; no new captures until some are deleted`,
          'raised',
          triggerSample,
        );
      }
      const refused = Promise.reject(new Error('capture quota reached'));
      refused.catch(() => undefined);
      return { file: '', firstSample: -1, done: refused };
    }
    const firstSample = Math.max(ring.oldestSample, triggerSample - Math.round(this.preSeconds * rate));
    const name = recordingFileName(`capture-${safeLabel(label)}`, this.pipeline.wallTimeAt(firstSample), firstSample);
    const path = join(this.folder.recordings, name);
    const file = relative(this.folder.root, path);
    let resolve!: (r: { file: string; frames: number }) => void;
    let reject!: (e: Error) => void;
    const promise = new Promise<{ file: string; frames: number }>((a, b) => {
      resolve = a;
      reject = b;
    });
    promise.catch(() => undefined); // the caller may not wait: never an unhandled rejection
    try {
      const writer = new WavWriter(path, this.metadata(firstSample, `capture: ${label}`), { durable: this.durable });
      const held = ring.copyFrom(firstSample, this.scratch);
      if (held > 0) writer.append(this.scratch, held);
      const cap: ActiveCapture = { writer, file, firstSample, endSample, label, promise, resolve, reject };
      this.captures.push(cap);
      if (this.captured.size >= 10_000) this.captured.delete(this.captured.keys().next().value!);
      this.captured.set(label, file);
      this.captureBytes = this.captureBytesNow() + this.captureCost(triggerSample);
      if (ring.nextSample > endSample) this.finishCapture(cap);
    } catch (err) {
      reject(err as Error);
      this.report(`capture ${file} failed: ${(err as Error).message}`, 'raised');
    }
    return { file, firstSample, done: promise };
  }

  /** Bytes of the capture files in recordings/ (read once from disk, then counted as captures are made). */
  private captureBytesNow(): number {
    if (this.captureBytes < 0) {
      this.captureBytes = 0;
      try {
        for (const n of readdirSync(this.folder.recordings)) {
          if (n.startsWith('capture-') && n.endsWith('.wav'))
            this.captureBytes += statSync(join(this.folder.recordings, n)).size;
        }
      } catch {
        // no folder yet: nothing captured
      }
    }
    return this.captureBytes;
  }

  /** Bytes one capture of pre + post seconds takes (float32 samples, all channels). */
  private captureCost(_trigger: number): number {
    const info = this.info!;
    return Math.ceil((this.preSeconds + this.postSeconds) * info.sampleRate) * info.channels.length * 4;
  }

  /** Flushes and closes every open file, stops the flush timer and unsubscribes. */
  close(): void {
    this.closeAll();
    clearInterval(this.timer);
    for (const u of this.unsubscribe) u();
    this.unsubscribe.length = 0;
  }

  // ---- internals ----

  private onInfo(info: StreamInfo): void {
    const changed =
      !this.info || this.info.sampleRate !== info.sampleRate || this.info.channels.length !== info.channels.length;
    this.info = info;
    if (changed) {
      this.closeAll();
      const frames = Math.max(1, Math.round((this.preSeconds + this.decisionSeconds) * info.sampleRate));
      this.ring = new SampleRing(info.channels.length, frames);
      this.ring.restart(info.firstSample);
      // Scratch for copying the ring into a capture (never more than the ring holds).
      this.scratch = info.channels.map(() => new Float32Array(frames));
      this.nextSample = info.firstSample;
    }
  }

  private metadata(firstSample: number, notes?: string): WavWriterMetadata {
    const info = this.info!;
    const p = this.pipeline!;
    return {
      sampleRate: info.sampleRate,
      channels: info.channels.map((c) => ({
        name: c.name,
        unit: c.unit,
        scale: c.scale,
        fullScaleCounts: Number.isFinite(c.fullScaleCounts) ? c.fullScaleCounts : undefined,
        ...(c.calibration ? { gain: c.calibration.gain, calibration: c.calibration } : {}),
      })),
      source: { kind: info.source.kind, label: info.source.label },
      boardId: info.boardId,
      firstSample,
      startWallTime: p.wallTimeAt(firstSample),
      analysis: p.analysisSettings,
      notes,
    };
  }

  private onBlock(b: CalibratedBlock): void {
    if (b.firstSample !== this.nextSample) this.onGap(b.firstSample);
    if (this.wanted && this.rec.state === 'failed' && this.retryAt >= 0 && performance.now() >= this.retryAt)
      this.rec.state = 'recording';
    if (this.wanted && this.rec.state === 'recording') this.appendContinuous(b);
    for (let i = 0; i < this.captures.length;) {
      const cap = this.captures[i];
      const n = Math.min(b.frames, cap.endSample + 1 - b.firstSample);
      if (n > 0) {
        try {
          cap.writer.append(b.data, n);
        } catch (err) {
          this.failCapture(cap, err as Error);
          continue;
        }
      }
      if (b.firstSample + b.frames > cap.endSample) this.finishCapture(cap);
      else i++;
    }
    this.ring?.push(b.data, b.firstSample, b.frames);
    this.nextSample = b.firstSample + b.frames;
    this.framesSinceWriteOut += b.frames;
    if (this.framesSinceWriteOut >= this.writeOutSeconds * this.info!.sampleRate)
      this.eachOpenWriter((w) => w.writeOut());
  }

  private appendContinuous(b: CalibratedBlock): void {
    const info = this.info!;
    const channels = info.channels.length;
    const rotateFrames = Math.min(
      this.rotateSeconds > 0 ? Math.round(this.rotateSeconds * info.sampleRate) : Infinity,
      Math.floor(this.rotateBytes / (4 * channels)),
    );
    let done = 0;
    try {
      while (done < b.frames) {
        if (!this.current) this.openCurrent(b.firstSample + done);
        const cur = this.current!;
        const room = rotateFrames - cur.writer.frames;
        const n = Math.min(b.frames - done, room);
        cur.writer.append(b.data, n, done);
        done += n;
        this.rec.framesWritten += n;
        if (cur.writer.frames >= rotateFrames) this.closeCurrent();
      }
    } catch (err) {
      this.failRecording(err as Error, b.firstSample + b.frames - 1);
    }
  }

  private openCurrent(firstSample: number): void {
    const name = recordingFileName(this.prefix, this.pipeline!.wallTimeAt(firstSample), firstSample);
    const path = join(this.folder.recordings, name);
    const file = relative(this.folder.root, path);
    this.rec.file = file;
    const writer = new WavWriter(path, this.metadata(firstSample), { durable: this.durable });
    this.current = { writer, file, firstSample };
    this.rec.files.push(file);
    if (this.retryAt >= 0) {
      this.retryAt = -1;
      this.rec.error = undefined;
      this.report(
        `recording resumed in ${file}: the disk has room again; samples ${this.missedFrom}…${firstSample - 1} are not in the recording.`,
        'cleared',
        firstSample,
      );
    }
  }

  private closeCurrent(): void {
    const cur = this.current;
    this.current = undefined;
    if (!cur) return;
    try {
      cur.writer.close();
    } catch (err) {
      this.failRecording(err as Error);
    }
  }

  private failRecording(err: Error, sample?: number): void {
    const cur = this.current;
    this.current = undefined;
    if (cur) {
      try {
        cur.writer.close();
      } catch {
        // the file keeps what was flushed; a later start repairs its header
      }
    }
    const retrying = this.retryAt >= 0;
    this.rec.state = 'failed';
    this.rec.error = err.message;
    if (isDiskFull(err)) {
      // Space may come back (files deleted): try again every retryMs and say so when it works.
      if (!retrying) this.missedFrom = cur ? cur.firstSample + cur.writer.framesOnDisk : (sample ?? this.nextSample);
      this.retryAt = performance.now() + this.retryMs;
      if (retrying) return; // still full: the raised event already says so
      this.report(
        `recording failed: ${err.message} Analysis goes on; recording resumes by itself when the disk has room.`,
        'raised',
        sample,
      );
      return;
    }
    this.wanted = false;
    this.report(`recording failed: ${err.message} Analysis goes on without recording.`, 'raised', sample);
  }

  private finishCapture(cap: ActiveCapture): void {
    const i = this.captures.indexOf(cap);
    if (i >= 0) this.captures.splice(i, 1);
    try {
      cap.writer.close();
      cap.resolve({ file: cap.file, frames: cap.writer.frames });
    } catch (err) {
      if (cap.writer.framesOnDisk === 0) removeRecording(join(this.folder.root, cap.file));
      cap.reject(err as Error);
      this.report(`capture ${cap.file} failed: ${(err as Error).message}`, 'raised');
    }
  }

  private failCapture(cap: ActiveCapture, err: Error): void {
    const i = this.captures.indexOf(cap);
    if (i >= 0) this.captures.splice(i, 1);
    try {
      cap.writer.close();
    } catch {
      // already failing: the reason below is the one that matters
    }
    if (cap.writer.framesOnDisk === 0) removeRecording(join(this.folder.root, cap.file)); // no samples: no file
    cap.reject(err);
    this.report(`capture ${cap.file} failed: ${err.message}`, 'raised');
  }

  /** At a gap every file ends; the next block starts new ones with its own first sample index. */
  private onGap(nextSample: number): void {
    if (nextSample === this.nextSample) return;
    this.closeCurrent();
    for (const cap of [...this.captures]) this.finishCapture(cap);
    this.ring?.restart(nextSample);
    this.nextSample = nextSample;
  }

  private flushAll(): void {
    this.eachOpenWriter((w) => w.flush());
  }

  /** Runs `op` on the continuous file and every capture; a failure marks that file failed, the others go on. */
  private eachOpenWriter(op: (w: WavWriter) => void): void {
    this.framesSinceWriteOut = 0;
    if (this.current) {
      try {
        op(this.current.writer);
      } catch (err) {
        this.failRecording(err as Error);
      }
    }
    for (const cap of [...this.captures]) {
      try {
        op(cap.writer);
      } catch (err) {
        this.failCapture(cap, err as Error);
      }
    }
  }

  private closeAll(): void {
    this.closeCurrent();
    for (const cap of [...this.captures]) this.finishCapture(cap);
  }

  private report(detail: string, state: 'raised' | 'cleared', at?: number): void {
    process.stderr.write(`floorline: ${detail}\n`);
    const p = this.pipeline;
    if (!p) return;
    const sample = at ?? Math.max(0, this.nextSample - 1);
    const rate = this.info?.sampleRate ?? 1;
    const e: FloorlineEvent = {
      kind: 'alarm',
      rule: 'recording',
      state,
      channel: '*',
      sample,
      t: sample / rate,
      wallTime: p.wallTimeAt(sample),
      detail,
    };
    p.emitEvent(e);
  }
}
