// Replays a WAV recording (ours, or any file the WAV reader takes) through the same SourceSink as a live board.
// Speed 1 paces blocks to sample time × wall clock; N runs N times faster; 'max' as fast as the analysis goes
// (the pipeline processes each block inside block(), so nothing is dropped at any speed). Looping continues the
// sample count across the seam, which is announced as a zero-length gap so estimates restart cleanly there.
import { statSync } from 'node:fs';
import { basename } from 'node:path';
import type { ChannelInfo, Source, SourceCounters, SourceSink, StreamInfo } from '../../protocol/stream.ts';
import { WavReader, type WavInfo } from '../wav/reader.ts';
import { nextFileOfRun } from './rotated-run.ts';
import { applyUnitOverride } from '../wav/unit-override.ts';

export type ReplaySpeed = number | 'max';

export interface ReplayOptions {
  speed?: ReplaySpeed;
  loop?: boolean;
  /** Absolute sample index to start at (the recording's own count, as printed in events). */
  startSample?: number;
  /** Or a sample time t in seconds (absolute, t = sample / rate). */
  startTime?: number;
  /** Frames per block; default ~20 ms of samples at speed 1, 65536 otherwise. */
  blockFrames?: number;
  /** Volts per full scale for integer PCM or unlabelled float files from elsewhere. */
  scale?: number;
  /** The unit of channels that read as FS (a float file from elsewhere already in volts: 'V'). */
  unit?: string;
  /** With loop and a later start: each loop after the first plays the whole file, not from the start point (the
   *  demo opens near its first event, then loops over the whole recording so sample time mod its length stays
   *  the recording's own time). */
  loopWholeFile?: boolean;
  /** Stop after this many loops (for tests); default unlimited when looping. */
  maxLoops?: number;
  /** At the end of the file, go on with the next file of the same rotated recording (not with loop). */
  follow?: boolean;
}

/** Parses a --speed value: 1, any positive number, or "max". */
export function parseSpeed(raw: string): ReplaySpeed | undefined {
  if (raw === 'max') return 'max';
  const n = Number(raw);
  return raw.trim() !== '' && Number.isFinite(n) && n > 0 ? n : undefined;
}

/** Channel description for the pipeline: samples arrive in units, so scale is 1 and full scale is in units. */
function channelInfo(info: WavInfo): ChannelInfo[] {
  const isInt = info.format.encoding.startsWith('int');
  return info.channels.map((c, i) => {
    const meta = info.metadata?.channels[i];
    let fullScale = Infinity;
    if (meta?.fullScaleCounts !== undefined && meta.scale !== undefined) fullScale = meta.fullScaleCounts * meta.scale;
    else if (isInt) fullScale = c.factor * 2 ** (info.format.bytesPerSample * 8 - 1);
    return {
      name: c.name,
      unit: c.unit,
      scale: 1,
      fullScaleCounts: fullScale,
      ...(meta?.calibration ? { calibration: meta.calibration } : {}),
      ...(meta && (meta.gain !== undefined || meta.budget !== undefined)
        ? {
            frontEnd: {
              ...(meta.gain !== undefined && meta.gain > 0 ? { gain: meta.gain } : {}),
              ...(meta.budget ? { budget: meta.budget } : {}),
              ...(meta.scale !== undefined && meta.fullScaleCounts !== undefined ? { lsb: meta.scale } : {}),
            },
          }
        : {}),
    };
  });
}

const sleep = (ms: number) => new Promise<void>((r) => setTimeout(r, ms));
const yieldToLoop = () => new Promise<void>((r) => setImmediate(r));

export class ReplaySource implements Source {
  readonly kind = 'replay' as const;
  private reader: WavReader | undefined;
  private stopping = false;
  private readonly stats: SourceCounters = {
    bytes: 0,
    frames: 0,
    crcErrors: 0,
    syncErrors: 0,
    lostSamples: 0,
    reconnects: 0,
  };
  private running: Promise<void> = Promise.resolve();
  /** Position for a status banner: sample index within the file and the loop count. */
  readonly position = { sample: 0, loops: 0 };

  constructor(
    readonly path: string,
    private readonly options: ReplayOptions = {},
  ) {
    const s = options.speed ?? 1;
    if (s !== 'max' && !(typeof s === 'number' && s > 0 && Number.isFinite(s))) {
      throw new RangeError(`replay speed must be a positive number or 'max', got ${String(s)}`);
    }
    if (options.follow && options.loop) throw new RangeError('replay: give --follow or --loop, not both');
  }

  get speed(): ReplaySpeed {
    return this.options.speed ?? 1;
  }

  /** Whether the replay starts again at the end. */
  get loops(): boolean {
    return this.options.loop ?? false;
  }

  /** The file's header and metadata, once started. */
  get fileInfo(): WavInfo | undefined {
    return this.reader?.info;
  }

  /**
   * Channels whose calibration the file's own metadata already carries (a rig config is not applied to them again).
   * Read from the open file once started; before that from its header alone.
   */
  async calibratedChannels(): Promise<Set<number>> {
    let info = this.reader?.info;
    if (!info) {
      const header = await WavReader.open(this.path, { scale: this.options.scale });
      info = header.info;
      await header.close();
    }
    const calibrated = new Set<number>();
    info.metadata?.channels.forEach((c, i) => c.calibration && calibrated.add(i));
    return calibrated;
  }

  /** Resolves when the replay has ended (end of file, loop limit or stop()); rejects on a read error. */
  get done(): Promise<void> {
    return this.running;
  }

  counters(): SourceCounters {
    return { ...this.stats };
  }

  async start(sink: SourceSink): Promise<void> {
    const speed = this.speed;
    const blockFrames0 = this.options.blockFrames;
    // Open once to learn the rate, then reopen with the block size that suits it.
    let reader = await WavReader.open(this.path, { scale: this.options.scale, blockFrames: blockFrames0 ?? 65536 });
    if (blockFrames0 === undefined && speed !== 'max') {
      const frames = Math.max(64, Math.round(reader.info.sampleRate / 50));
      await reader.close();
      reader = await WavReader.open(this.path, { scale: this.options.scale, blockFrames: frames });
    }
    this.reader = reader;
    const info = reader.info;
    const unitProblem = applyUnitOverride(info.channels, this.options.unit, this.path);
    if (unitProblem) {
      await reader.close();
      throw Object.assign(new RangeError(unitProblem), { exitCode: 2 });
    }
    const startFrame = this.resolveStart(info);
    reader.seek(startFrame);
    // A file from elsewhere has no start time: label it as ending at its modification time, so the labels of a
    // file are the same on every replay.
    const start0 = info.startWallTime
      ? Date.parse(info.startWallTime)
      : statSync(this.path).mtimeMs - (info.frames / info.sampleRate) * 1000;
    const stream: StreamInfo = {
      sampleRate: info.sampleRate,
      channels: channelInfo(info),
      source: { kind: 'replay', label: basename(this.path) },
      boardId: info.metadata?.boardId,
      firstSample: info.firstSample + startFrame,
      startWallTime: new Date(start0 + (startFrame / info.sampleRate) * 1000).toISOString(),
    };
    sink.info(stream);
    this.running = this.play(sink, reader, startFrame, stream.firstSample);
  }

  async stop(): Promise<void> {
    this.stopping = true;
    await this.running.catch(() => undefined);
  }

  private resolveStart(info: WavInfo): number {
    const { startSample, startTime } = this.options;
    let sample = info.firstSample;
    if (startSample !== undefined) sample = startSample;
    else if (startTime !== undefined) sample = Math.round(startTime * info.sampleRate);
    const last = info.firstSample + info.frames - 1;
    if (info.frames === 0) {
      throw Object.assign(
        new RangeError(
          `${this.path} holds no whole frame of samples; there is nothing to replay (\`floorline repair FILE\` recovers samples an interrupted recording left).`,
        ),
        { exitCode: 2 },
      );
    }
    if (!Number.isInteger(sample) || sample < info.firstSample || sample > last) {
      throw Object.assign(
        new RangeError(
          `${this.path}: start at sample ${sample} is outside the recording (samples ${info.firstSample}…${last}, ` +
            `t ${(info.firstSample / info.sampleRate).toFixed(3)}…${(last / info.sampleRate).toFixed(3)} s); pick a start inside it.`,
        ),
        { exitCode: 2 },
      );
    }
    return sample - info.firstSample;
  }

  /** Opens the file after the current one in its rotated run; undefined at the end of the run. */
  private async openNextOfRun(current: WavReader, next: number): Promise<WavReader | undefined> {
    const found = nextFileOfRun(current.info.path, next);
    if (!found) return undefined;
    const reader = await WavReader.open(found.path, { scale: this.options.scale, blockFrames: current.blockFrames });
    const a = current.info;
    const b = reader.info;
    if (b.sampleRate !== a.sampleRate || b.channels.length !== a.channels.length) {
      await reader.close();
      throw Object.assign(
        new RangeError(
          `${found.path} (${b.channels.length} ch at ${b.sampleRate} Hz) does not continue ${a.path} (${a.channels.length} ch at ${a.sampleRate} Hz); replay them separately.`,
        ),
        { exitCode: 2 },
      );
    }
    return reader;
  }

  private async play(sink: SourceSink, reader: WavReader, startFrame: number, firstSample: number): Promise<void> {
    const rate = reader.info.sampleRate;
    const speed = this.speed;
    const maxLoops = this.options.maxLoops ?? Infinity;
    const bytesPerFrame = reader.info.format.blockAlign;
    const t0 = performance.now();
    let next = firstSample;
    let delivered = 0;
    try {
      for (;;) {
        const block = await reader.read();
        if (this.stopping) break;
        if (!block && this.options.follow) {
          const following = await this.openNextOfRun(reader, next);
          if (!following) break;
          await reader.close();
          reader = following;
          this.reader = following;
          const first = following.info.firstSample;
          // A hole between files is a gap the live run had too (the recorder starts a new file at each gap).
          if (first > next)
            sink.gap({
              sample: next,
              lost: first - next,
              reason: `no recording between files (${basename(following.info.path)} starts at sample ${first})`,
            });
          next = first;
          continue;
        }
        if (!block) {
          if (!this.options.loop || this.position.loops + 1 >= maxLoops) break;
          this.position.loops++;
          const from = this.options.loopWholeFile ? 0 : startFrame;
          reader.seek(from);
          sink.gap({
            sample: next,
            lost: 0,
            reason: 'replay loop: the recording starts again',
            restartsAt: reader.info.firstSample + from,
          });
          continue;
        }
        sink.block({ firstSample: next, frames: block.frames, data: block.data });
        next += block.frames;
        delivered += block.frames;
        this.position.sample = block.firstSample + block.frames - 1;
        this.stats.frames += block.frames;
        this.stats.bytes += block.frames * bytesPerFrame;
        if (speed === 'max') {
          await yieldToLoop();
        } else {
          const due = t0 + ((delivered / rate) * 1000) / speed;
          const wait = due - performance.now();
          if (wait > 1) await sleep(wait);
          else await yieldToLoop();
        }
      }
    } finally {
      await reader.close();
      sink.end();
    }
  }
}
