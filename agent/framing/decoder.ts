// Binary frame decoder: a state machine over byte views. Frames lying wholly inside a pushed chunk are parsed in
// place; only a frame split across chunks is held, in one preallocated buffer of the largest frame size.
// A bad header or CRC rejects only the candidate's sync word: the search resumes at the next byte, so a valid
// frame that began inside a damaged one is still found.
// Work per byte is bounded (a flood of false sync words promising 64 KiB bodies must not cost a CRC of 64 KiB per
// few bytes): the held buffer is compacted at most once per frame length of input, and candidates longer than the
// longest valid frame seen so far are CRC-checked only while the bytes spent on failed checks stay within
// CRC_WORK_PER_BYTE per byte received; past that they are skipped unchecked and counted.
import { crc32 } from './crc32.ts';
import { DescriptorError, descriptorFromBytes, type BoardDescriptor } from './descriptor.ts';
import {
  CRC_LENGTH,
  HEADER_LENGTH,
  KIND_DESCRIBE_REQUEST,
  KIND_DESCRIPTOR,
  KIND_SAMPLES,
  MAX_CHANNELS,
  MAX_FRAME,
  SERIAL_PROTOCOL_VERSION,
  SAMPLES_PREFIX,
  SYNC,
  bytesPerSample,
  formatOfCode,
  type SampleFormat,
} from './protocol.ts';

/** One decoded samples frame. The object and its byte view are reused: valid only during the callback. */
export interface SampleFrame {
  /** Index of the frame's first instant, mod 2^32, as the board counts. */
  sequence: number;
  channels: number;
  format: SampleFormat;
  /** Sample instants in this frame. */
  frames: number;
  /** The bytes holding the interleaved payload, starting at `offset`. */
  bytes: Uint8Array;
  offset: number;
}

export interface FrameHandler {
  samples(frame: SampleFrame): void;
  descriptor(d: BoardDescriptor): void;
  /** A describe request arrived (board side). */
  describeRequest?(): void;
  /** A frame passed its CRC but its content was unusable (counted as malformed). */
  malformed?(detail: string): void;
}

export interface DecoderCounters {
  /** Bytes pushed. */
  bytes: number;
  /** Valid frames of any kind. */
  frames: number;
  sampleFrames: number;
  descriptors: number;
  /** Candidates (sync word and plausible header) whose CRC failed. */
  crcErrors: number;
  /** Runs of bytes that belonged to no frame (each run counted once), including false sync words. */
  syncErrors: number;
  /** Frames with a valid CRC but unusable content (bad channel count, format or length, bad descriptor). */
  malformed: number;
  /** Bytes skipped while searching for a sync word. */
  discardedBytes: number;
  /** Long candidates skipped without a CRC check because failed checks had used up the work budget. */
  unchecked: number;
  /** Bytes run through the CRC of candidates that failed it (the work the budget bounds). */
  failedCheckBytes: number;
}

/** Bytes of failed CRC checks allowed per byte received (plus one largest frame of head start). */
export const CRC_WORK_PER_BYTE = 8;

/** What the held partial frame is waiting for (named states of the machine). */
export type DecoderState = 'seek-sync' | 'need-header' | 'need-body';

const S0 = SYNC[0];
const S1 = SYNC[1];
const S2 = SYNC[2];
const S3 = SYNC[3];

export class FrameDecoder {
  readonly counters: DecoderCounters = {
    bytes: 0,
    frames: 0,
    sampleFrames: 0,
    descriptors: 0,
    crcErrors: 0,
    syncErrors: 0,
    malformed: 0,
    discardedBytes: 0,
    unchecked: 0,
    failedCheckBytes: 0,
  };
  // Twice the largest frame, so that dropping a rejected candidate's first bytes moves an offset, not the bytes:
  // the held bytes are held[heldStart .. heldStart + heldLength).
  private readonly held = new Uint8Array(2 * MAX_FRAME);
  private heldStart = 0;
  private heldLength = 0;
  /** Bytes of CRC work still allowed for candidates longer than `longestValid` (grows with the input). */
  private credit = MAX_FRAME;
  private longestValid = 0;
  /** True while bytes are being discarded, so one run of garbage counts as one sync error. */
  private lostAlignment = false;
  private readonly frame: SampleFrame = {
    sequence: 0,
    channels: 0,
    format: 'int16',
    frames: 0,
    bytes: this.held,
    offset: 0,
  };

  constructor(private readonly handler: FrameHandler) {}

  /** State of the held partial frame (for diagnostics and tests). */
  get state(): DecoderState {
    if (this.heldLength < SYNC.length) return 'seek-sync';
    return this.heldLength < HEADER_LENGTH ? 'need-header' : 'need-body';
  }

  /** Bytes of a partial frame held between pushes (at most one frame). */
  get pending(): number {
    return this.heldLength;
  }

  /** Forget any held partial frame (e.g. after the port was reopened). */
  reset(): void {
    this.heldStart = 0;
    this.heldLength = 0;
    this.lostAlignment = false;
  }

  /** Consumes bytes[start..end). The view is not kept after the call returns. */
  push(bytes: Uint8Array, start = 0, end = bytes.length): void {
    this.counters.bytes += end - start;
    this.credit = Math.min(this.credit + CRC_WORK_PER_BYTE * (end - start), 4 * MAX_FRAME);
    let pos = start;
    if (this.heldLength > 0) {
      pos = this.completeHeld(bytes, pos, end);
      if (this.heldLength > 0) return;
    }
    const tail = this.scan(bytes, pos, end);
    if (tail < end) {
      this.held.set(bytes.subarray(tail, end), 0);
      this.heldStart = 0;
      this.heldLength = end - tail;
    }
  }

  /** Bytes the held candidate needs before the scanner can decide on it. */
  private heldNeed(): number {
    const h = this.held;
    const o = this.heldStart;
    const n = this.heldLength;
    if (n < HEADER_LENGTH) return HEADER_LENGTH;
    if (h[o] !== S0 || h[o + 1] !== S1 || h[o + 2] !== S2 || h[o + 3] !== S3) return n;
    const body = h[o + 6] | (h[o + 7] << 8);
    if (!plausibleHeader(h[o + 4], h[o + 5], body)) return n;
    return HEADER_LENGTH + body + CRC_LENGTH;
  }

  /** Tops up the held frame from bytes[pos..end) just as far as needed, and scans it. Returns the new pos. */
  private completeHeld(bytes: Uint8Array, pos: number, end: number): number {
    const h = this.held;
    while (this.heldLength > 0) {
      const need = this.heldNeed();
      if (this.heldLength < need) {
        if (this.heldStart + need > h.length) {
          // Compact: heldStart > MAX_FRAME here, so this copy is paid for by that many bytes consumed.
          h.copyWithin(0, this.heldStart, this.heldStart + this.heldLength);
          this.heldStart = 0;
        }
        const k = Math.min(need - this.heldLength, end - pos);
        h.set(bytes.subarray(pos, pos + k), this.heldStart + this.heldLength);
        this.heldLength += k;
        pos += k;
        if (this.heldLength < need) return pos;
      }
      const heldEnd = this.heldStart + this.heldLength;
      const tail = this.scan(h, this.heldStart, heldEnd);
      if (tail >= heldEnd) {
        this.heldStart = 0;
        this.heldLength = 0;
      } else {
        // tail > heldStart here: the scanner always consumes a decided candidate, and heldNeed() made it decidable.
        this.heldLength = heldEnd - tail;
        this.heldStart = tail;
      }
    }
    return pos;
  }

  /** Parses frames in src[pos..end); returns where the undecided tail (partial frame or sync prefix) begins. */
  private scan(src: Uint8Array, pos: number, end: number): number {
    const c = this.counters;
    for (;;) {
      const p = findSync(src, pos, end);
      if (p > pos) this.discard(p - pos);
      pos = p;
      if (end - pos < HEADER_LENGTH) return pos;
      const version = src[pos + 4];
      const kind = src[pos + 5];
      const body = src[pos + 6] | (src[pos + 7] << 8);
      if (!plausibleHeader(version, kind, body)) {
        this.discard(1);
        pos += 1;
        continue;
      }
      const total = HEADER_LENGTH + body + CRC_LENGTH;
      if (end - pos < total) return pos;
      const long = body > this.longestValid;
      if (long && this.credit < body) {
        c.unchecked++;
        this.lostAlignment = true;
        c.discardedBytes += 1;
        pos += 1;
        continue;
      }
      const crcAt = pos + HEADER_LENGTH + body;
      const stored = (src[crcAt] | (src[crcAt + 1] << 8) | (src[crcAt + 2] << 16) | (src[crcAt + 3] << 24)) >>> 0;
      if (crc32(src, pos + 4, crcAt) !== stored) {
        c.crcErrors++;
        c.failedCheckBytes += body + 4;
        if (long) this.credit -= body;
        this.lostAlignment = true;
        c.discardedBytes += 1;
        pos += 1;
        continue;
      }
      if (body > this.longestValid) this.longestValid = body;
      this.lostAlignment = false;
      c.frames++;
      this.dispatch(src, pos + HEADER_LENGTH, kind, body);
      pos += total;
    }
  }

  private discard(n: number): void {
    if (!this.lostAlignment) {
      this.counters.syncErrors++;
      this.lostAlignment = true;
    }
    this.counters.discardedBytes += n;
  }

  private dispatch(src: Uint8Array, b: number, kind: number, body: number): void {
    const c = this.counters;
    if (kind === KIND_SAMPLES) {
      const channels = src[b];
      const format = formatOfCode(src[b + 1]);
      if (channels < 1 || channels > MAX_CHANNELS || format === undefined) {
        return this.bad(`samples frame with channel count ${channels} and format code ${src[b + 1]}`);
      }
      const stride = channels * bytesPerSample(format);
      const payload = body - SAMPLES_PREFIX;
      if (payload <= 0 || payload % stride !== 0) {
        return this.bad(`samples frame payload of ${payload} bytes is not a whole number of ${stride}-byte instants`);
      }
      const f = this.frame;
      f.sequence = (src[b + 2] | (src[b + 3] << 8) | (src[b + 4] << 16) | (src[b + 5] << 24)) >>> 0;
      f.channels = channels;
      f.format = format;
      f.frames = payload / stride;
      f.bytes = src;
      f.offset = b + SAMPLES_PREFIX;
      c.sampleFrames++;
      this.handler.samples(f);
    } else if (kind === KIND_DESCRIPTOR) {
      let d: BoardDescriptor;
      try {
        d = descriptorFromBytes(src, b, b + body);
      } catch (err) {
        if (err instanceof DescriptorError) return this.bad(err.message);
        throw err;
      }
      c.descriptors++;
      this.handler.descriptor(d);
    } else if (kind === KIND_DESCRIBE_REQUEST) {
      this.handler.describeRequest?.();
    }
  }

  private bad(detail: string): void {
    this.counters.malformed++;
    this.handler.malformed?.(detail);
  }
}

function plausibleHeader(version: number, kind: number, body: number): boolean {
  if (version !== SERIAL_PROTOCOL_VERSION) return false;
  if (kind === KIND_SAMPLES) return body > SAMPLES_PREFIX;
  if (kind === KIND_DESCRIPTOR) return body > 0;
  return kind === KIND_DESCRIBE_REQUEST && body === 0;
}

/**
 * First index i in [pos, end) where src[i..i+4) is the sync word; failing that, the first index whose bytes up to
 * `end` are a proper prefix of it (a sync word split by the chunk boundary); failing that, `end`.
 */
function findSync(src: Uint8Array, pos: number, end: number): number {
  let i = pos;
  const last = end - 4;
  for (; i <= last; i++) {
    if (src[i] === S0 && src[i + 1] === S1 && src[i + 2] === S2 && src[i + 3] === S3) return i;
  }
  for (; i < end; i++) {
    if (src[i] !== S0) continue;
    if (i + 1 < end && src[i + 1] !== S1) continue;
    if (i + 2 < end && src[i + 2] !== S2) continue;
    return i;
  }
  return end;
}
