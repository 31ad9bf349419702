// Crash-safe streaming WAV writer for recordings: IEEE float32 samples in calibrated units.
//
// Layout (every field little-endian):
//   RIFF <size> WAVE
//   JUNK 28      reserved: becomes 'ds64' in place when the file passes 4 GiB (EBU Tech 3306 §3.3)
//   fmt  18      WAVE_FORMAT_IEEE_FLOAT, cbSize 0
//   fact 4       sample frames (non-PCM files carry one; Microsoft RIFF spec 1991)
//   flmd N       our metadata JSON, padded with spaces to a reserved even size
//   data <size>  interleaved float32 frames
// Sizes start at 0 ("never patched") and are rewritten by every flush(), after the samples are written, so a
// crash leaves a header that is either right or 0 and the reader recovers every whole frame on disk.
import { closeSync, fdatasyncSync, lstatSync, openSync, renameSync, rmSync, writeFileSync, writeSync } from 'node:fs';
import { WavError, wavIoError } from './errors.ts';
import { WAVE_FORMAT_IEEE_FLOAT } from './format.ts';
import {
  METADATA_CHUNK_ID,
  METADATA_SCHEMA,
  sidecarPath,
  validateMetadata,
  type RecordingMetadata,
} from './metadata.ts';
import { sizePatches } from './sizes.ts';

function isRegularFile(p: string): boolean {
  try {
    return lstatSync(p).isFile();
  } catch {
    return false;
  }
}

/** What the caller gives: our metadata without the schema tag, which the writer adds. */
export type WavWriterMetadata = Omit<RecordingMetadata, 'schema'>;

export interface WavWriterOptions {
  /** Frames buffered in memory between writes (default 16384). flush() writes them earlier. */
  bufferFrames?: number;
  /** fdatasync on flush() and close() so a power cut keeps flushed samples (default true). */
  durable?: boolean;
  /** RIFF size above which the file turns into RF64 (default 0xFFFFFFFF; lower only to test). */
  rf64Above?: number;
  /** Spare bytes reserved in the metadata chunk beyond the JSON (default 1024). */
  metadataSpare?: number;
}

const U32_MAX = 0xffffffff;
const DS64_BODY = 28; // riffSize u64, dataSize u64, sampleCount u64, table length u32
const LITTLE_ENDIAN_HOST = new Uint8Array(Uint16Array.of(1).buffer)[0] === 1;

export class WavWriter {
  readonly path: string;
  readonly channels: number;
  readonly sampleRate: number;
  private fd: number;
  private readonly interleaved: Float32Array;
  private readonly bytes: Uint8Array;
  private readonly bufferFrames: number;
  private readonly durable: boolean;
  private readonly rf64Above: number;
  private readonly dataOffset: number;
  private readonly factOffset: number;
  private readonly dataSizeOffset: number;
  private pending = 0; // frames in the buffer
  private written = 0; // frames on disk
  private closed = false;
  private rf64 = false;

  /** Creates (or truncates) `path` and writes the header and the sidecar `path`.json. */
  constructor(path: string, metadata: WavWriterMetadata, options: WavWriterOptions = {}) {
    if (!LITTLE_ENDIAN_HOST)
      throw new WavError('WAV_MISUSE', 'WavWriter needs a little-endian host (WAV samples are little-endian).');
    validateMetadata({ ...metadata, schema: METADATA_SCHEMA }, `metadata for ${path}`);
    const channels = metadata.channels.length;
    const sampleRate = metadata.sampleRate;
    if (!Number.isInteger(sampleRate) || sampleRate > U32_MAX) {
      throw new WavError(
        'WAV_MISUSE',
        `WavWriter: sampleRate must be a whole number of Hz for a WAV header, got ${sampleRate}.`,
      );
    }
    if (channels > 0xffff / 4)
      throw new WavError('WAV_MISUSE', `WavWriter: ${channels} channels is more than a WAV header holds (16383).`);
    this.path = path;
    this.channels = channels;
    this.sampleRate = sampleRate;
    this.bufferFrames = options.bufferFrames ?? 16384;
    if (!Number.isInteger(this.bufferFrames) || this.bufferFrames < 1) {
      throw new RangeError(`WavWriter: bufferFrames must be a positive integer, got ${options.bufferFrames}`);
    }
    this.durable = options.durable ?? true;
    this.rf64Above = options.rf64Above ?? U32_MAX;
    this.interleaved = new Float32Array(this.bufferFrames * channels);
    this.bytes = new Uint8Array(this.interleaved.buffer);

    const json = JSON.stringify({ ...metadata, schema: METADATA_SCHEMA });
    const jsonBytes = new TextEncoder().encode(json);
    let reserved = jsonBytes.length + (options.metadataSpare ?? 1024);
    reserved += reserved & 1;
    this.factOffset = 12 + 8 + DS64_BODY + 8 + 18 + 8;
    const metaOffset = this.factOffset + 4 + 8;
    this.dataSizeOffset = metaOffset + reserved + 4;
    this.dataOffset = this.dataSizeOffset + 4;

    const h = new Uint8Array(this.dataOffset);
    const v = new DataView(h.buffer);
    const id = (at: number, s: string) => {
      for (let i = 0; i < 4; i++) h[at + i] = s.charCodeAt(i);
    };
    id(0, 'RIFF');
    id(8, 'WAVE');
    id(12, 'JUNK');
    v.setUint32(16, DS64_BODY, true);
    const fmt = 12 + 8 + DS64_BODY;
    id(fmt, 'fmt ');
    v.setUint32(fmt + 4, 18, true);
    v.setUint16(fmt + 8, WAVE_FORMAT_IEEE_FLOAT, true);
    v.setUint16(fmt + 10, channels, true);
    v.setUint32(fmt + 12, sampleRate, true);
    v.setUint32(fmt + 16, Math.min(U32_MAX, sampleRate * 4 * channels), true);
    v.setUint16(fmt + 20, 4 * channels, true);
    v.setUint16(fmt + 22, 32, true);
    v.setUint16(fmt + 24, 0, true);
    id(this.factOffset - 8, 'fact');
    v.setUint32(this.factOffset - 4, 4, true);
    id(metaOffset - 8, METADATA_CHUNK_ID);
    v.setUint32(metaOffset - 4, reserved, true);
    h.fill(0x20, metaOffset, metaOffset + reserved);
    h.set(jsonBytes, metaOffset);
    id(this.dataSizeOffset - 4, 'data');
    try {
      this.fd = openSync(path, 'w');
    } catch (err) {
      throw wavIoError(err, path, 'create');
    }
    try {
      this.writeAt(h, 0, h.length, 0);
      this.writeSidecar(json);
    } catch (err) {
      // Nothing is left behind: a header-only (or empty) file on a full disk is no recording.
      closeSync(this.fd);
      // Only regular files: a device given as the path (e.g. /dev/full) must never be unlinked.
      for (const p of [path, sidecarPath(path), `${sidecarPath(path)}.tmp`])
        if (isRegularFile(p)) rmSync(p, { force: true });
      throw err;
    }
  }

  /** Frames written to the file so far (not counting the buffer). */
  get framesOnDisk(): number {
    return this.written;
  }

  /** Frames on disk or buffered. */
  get frames(): number {
    return this.written + this.pending;
  }

  /** True once the file has turned into RF64. */
  get isRf64(): boolean {
    return this.rf64;
  }

  /**
   * Appends `frames` frames from one array per channel (starting at `start` in each): Float64Array as pipeline
   * blocks carry them, or Float32Array from a capture ring. Allocates nothing; writes to disk whenever the buffer
   * fills. Samples are stored as float32.
   */
  append(data: readonly (Float64Array | Float32Array)[], frames: number, start = 0): void {
    if (this.closed) throw new WavError('WAV_MISUSE', `${this.path}: append() after close().`);
    const channels = this.channels;
    if (!(Number.isInteger(frames) && Number.isInteger(start) && frames >= 0 && start >= 0)) {
      throw new RangeError(
        `WavWriter.append: frames and start must be non-negative integers, got ${frames} and ${start}`,
      );
    }
    if (data.length !== channels) {
      throw new WavError(
        'WAV_MISUSE',
        `${this.path}: append() got ${data.length} channel arrays, the file has ${channels}.`,
      );
    }
    for (let c = 0; c < channels; c++) {
      if (start + frames > data[c].length) {
        throw new RangeError(
          `WavWriter.append: channel ${c} has ${data[c].length} samples, fewer than start ${start} + frames ${frames}`,
        );
      }
    }
    const buf = this.interleaved;
    let done = 0;
    while (done < frames) {
      const n = Math.min(frames - done, this.bufferFrames - this.pending);
      for (let c = 0; c < channels; c++) {
        const src = data[c];
        const from = start + done;
        const to = this.pending * channels + c;
        // One loop per array type keeps each monomorphic.
        if (src instanceof Float64Array) interleave64(src, from, buf, to, channels, n);
        else interleave32(src, from, buf, to, channels, n);
      }
      this.pending += n;
      done += n;
      if (this.pending === this.bufferFrames) this.writePending();
    }
  }

  /**
   * Hands buffered samples and the patched header sizes to the kernel, without fdatasync: enough for the file to
   * survive the death of this process (kill -9), not a power cut. Cheap, so it can run often.
   */
  writeOut(): void {
    if (this.closed) return;
    this.writePending();
    this.patchHeader();
  }

  /** writeOut(), then fdatasync when durable (what survives a power cut). Call ≥ once a second. */
  flush(): void {
    if (this.closed) return;
    this.writeOut();
    if (this.durable) {
      try {
        fdatasyncSync(this.fd);
      } catch (err) {
        throw wavIoError(err, this.path, 'write');
      }
    }
  }

  /** Flushes and closes. Safe to call twice. The handle is closed even when the flush fails (a full disk), so
   * deleting files frees their space; the flush's error is thrown after. */
  close(): void {
    if (this.closed) return;
    try {
      this.flush();
    } finally {
      this.closed = true;
      closeSync(this.fd);
    }
  }

  private writePending(): void {
    if (this.pending === 0) return;
    const bytes = this.pending * this.channels * 4;
    // On failure (disk full) the samples stay buffered, so a later flush() can still write them.
    this.writeAt(this.bytes, 0, bytes, this.dataOffset + this.written * this.channels * 4);
    this.written += this.pending;
    this.pending = 0;
  }

  private patchHeader(): void {
    const dataBytes = this.written * this.channels * 4;
    const fields = {
      ds64Offset: 20,
      dataSizeOffset: this.dataSizeOffset,
      factOffset: this.factOffset,
      dataOffset: this.dataOffset,
    };
    const result = sizePatches(fields, dataBytes, this.written, this.rf64, this.rf64Above);
    if (!result) throw new WavError('WAV_MISUSE', `${this.path}: no room reserved for ds64.`); // our layout always has it
    this.rf64 = result.rf64;
    for (const p of result.patches) this.writeAt(p.bytes, 0, p.bytes.length, p.offset);
  }

  private writeAt(buf: Uint8Array, offset: number, length: number, position: number): void {
    try {
      let done = 0;
      while (done < length) done += writeSync(this.fd, buf, offset + done, length - done, position + done);
    } catch (err) {
      throw wavIoError(err, this.path, 'write');
    }
  }

  private writeSidecar(json: string): void {
    const target = sidecarPath(this.path);
    const tmp = `${target}.tmp`;
    try {
      writeFileSync(tmp, JSON.stringify(JSON.parse(json), null, 2) + '\n');
      renameSync(tmp, target); // atomic: a reader never sees half a sidecar
    } catch (err) {
      throw wavIoError(err, target, 'write');
    }
  }
}

function interleave64(src: Float64Array, from: number, dst: Float32Array, to: number, stride: number, n: number): void {
  for (let i = 0, s = from, d = to; i < n; i++, s++, d += stride) dst[d] = src[s];
}

function interleave32(src: Float32Array, from: number, dst: Float32Array, to: number, stride: number, n: number): void {
  for (let i = 0, s = from, d = to; i < n; i++, s++, d += stride) dst[d] = src[s];
}
