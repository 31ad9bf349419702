// Turns decoded frames into the pipeline's blocks in continuous sample time. The board's sequence counter
// (instants mod 2^32) decides the sample index: a jump is a gap of exactly that many instants; a new `boot`
// or a large step backwards is a board restart (PROTOCOL.md, "Host behaviour"). Before the first descriptor,
// frames are held (bounded) and delivered once it arrives.
import type { SampleFrame } from '../framing/decoder.ts';
import type { BoardDescriptor } from '../framing/descriptor.ts';
import { bytesPerSample } from '../framing/protocol.ts';
import { decodeInterleaved } from '../framing/samples.ts';
import type { ChannelInfo, SourceSink, StreamInfo } from '../../protocol/stream.ts';

/** Bytes of sample frames held while waiting for the first descriptor. */
export const MAX_HELD_BYTES = 4 * 1024 * 1024;
/** A step backwards smaller than this many seconds (without a new boot) is a stale duplicate, not a restart. */
const DUPLICATE_WINDOW_S = 10;

export interface SequencerCounters {
  frames: number;
  lostSamples: number;
  /** Frames whose layout disagreed with the descriptor, stale duplicates, and frames beyond the hold limit. */
  rejectedFrames: number;
  restarts: number;
}

type Out = Pick<SourceSink, 'info' | 'block' | 'gap'>;

export class SampleSequencer {
  readonly counters: SequencerCounters = { frames: 0, lostSamples: 0, rejectedFrames: 0, restarts: 0 };
  private info: StreamInfo | undefined;
  private descriptor: BoardDescriptor | undefined;
  private expected: number | undefined;
  private restartPending = false;
  /** Next sample index to assign. */
  nextIndex = 0;
  private block: Float64Array[] = [];
  private blockStart = 0;
  private blockFrames = 0;
  private readonly held: {
    sequence: number;
    channels: number;
    format: SampleFrame['format'];
    frames: number;
    bytes: Uint8Array;
  }[] = [];
  private heldBytes = 0;

  constructor(
    private readonly out: Out,
    private readonly label: string,
    private readonly blockCapacity = 65536,
  ) {}

  get stream(): StreamInfo | undefined {
    return this.info;
  }

  onDescriptor(d: BoardDescriptor): void {
    const channels: ChannelInfo[] = d.channels.map((c) => ({
      name: c.name,
      unit: c.unit,
      scale: c.perCount,
      fullScaleCounts: c.fullScale,
    }));
    const prev = this.descriptor;
    if (prev && prev.boot !== d.boot) this.restartPending = true;
    this.descriptor = d;
    const changed =
      !this.info || JSON.stringify(this.info.channels) !== JSON.stringify(channels) || this.info.sampleRate !== d.rate;
    if (!changed) return;
    this.flush();
    if (this.block.length !== channels.length) this.block = channels.map(() => new Float64Array(this.blockCapacity));
    this.info = {
      sampleRate: d.rate,
      channels,
      source: { kind: 'serial', label: this.label },
      boardId: d.board,
      firmware: d.firmware,
      firstSample: this.nextIndex,
      startWallTime: new Date().toISOString(),
    };
    this.out.info(this.info);
    const held = this.held.splice(0);
    this.heldBytes = 0;
    for (const h of held) this.accept(h.sequence, h.channels, h.format, h.frames, h.bytes, 0);
  }

  onFrame(f: SampleFrame): void {
    if (!this.info) {
      const n = f.frames * f.channels * bytesPerSample(f.format);
      if (this.heldBytes + n > MAX_HELD_BYTES) {
        this.counters.rejectedFrames++;
        return;
      }
      this.held.push({
        sequence: f.sequence,
        channels: f.channels,
        format: f.format,
        frames: f.frames,
        bytes: f.bytes.slice(f.offset, f.offset + n),
      });
      this.heldBytes += n;
      return;
    }
    this.accept(f.sequence, f.channels, f.format, f.frames, f.bytes, f.offset);
  }

  private accept(
    sequence: number,
    channels: number,
    format: SampleFrame['format'],
    frames: number,
    bytes: Uint8Array,
    offset: number,
  ): void {
    const d = this.descriptor!;
    if (channels !== d.channels.length || format !== d.format) {
      this.counters.rejectedFrames++;
      return;
    }
    if (this.expected === undefined) this.expected = sequence;
    const delta = (sequence - this.expected) >>> 0;
    let lost = 0;
    let reason = '';
    let restarted = false;
    if (this.restartPending || delta >= 2 ** 31) {
      const back = 2 ** 32 - delta;
      if (!this.restartPending && back <= DUPLICATE_WINDOW_S * d.rate) {
        this.counters.rejectedFrames++; // stale bytes from before a reconnect: already delivered
        return;
      }
      this.restartPending = false;
      this.counters.restarts++;
      restarted = true;
      lost = sequence;
      reason = `board restarted (new boot or counter reset): ${sequence} instants of the new boot before its first received frame; time while it was off is not counted`;
    } else if (delta > 0) {
      lost = delta;
      reason = `${delta} instants missing by the board's sequence counter`;
    }
    // A restart is a discontinuity even when nothing was lost: the analysis must not join the two runs.
    if (lost > 0 || restarted) {
      this.flush();
      this.out.gap({ sample: this.nextIndex, lost, reason });
      this.nextIndex += lost;
      this.counters.lostSamples += lost;
    }
    if (this.blockFrames + frames > this.blockCapacity) this.flush();
    if (this.blockFrames === 0) this.blockStart = this.nextIndex;
    decodeInterleaved(bytes, offset, format, channels, frames, this.block, this.blockFrames);
    this.blockFrames += frames;
    this.nextIndex += frames;
    this.expected = (sequence + frames) >>> 0;
    this.counters.frames++;
  }

  /** Delivers the samples gathered so far as one block (call after each chunk of bytes). */
  flush(): void {
    if (this.blockFrames === 0) return;
    const frames = this.blockFrames;
    this.blockFrames = 0;
    this.out.block({ firstSample: this.blockStart, frames, data: this.block });
  }
}
