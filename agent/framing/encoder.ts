// Frame encoder: the reference implementation of the board side of the link (the simulator uses it).
import { crc32 } from './crc32.ts';
import { descriptorToBytes, type BoardDescriptor } from './descriptor.ts';
import {
  CRC_LENGTH,
  HEADER_LENGTH,
  KIND_DESCRIBE_REQUEST,
  KIND_DESCRIPTOR,
  KIND_SAMPLES,
  MAX_BODY,
  MAX_CHANNELS,
  SERIAL_PROTOCOL_VERSION,
  SAMPLES_PREFIX,
  SYNC,
  bytesPerSample,
  formatCode,
  type SampleFormat,
} from './protocol.ts';
import { encodeInterleaved } from './samples.ts';

function writeHeader(dst: Uint8Array, offset: number, kind: number, bodyLength: number): void {
  dst.set(SYNC, offset);
  dst[offset + 4] = SERIAL_PROTOCOL_VERSION;
  dst[offset + 5] = kind;
  dst[offset + 6] = bodyLength & 0xff;
  dst[offset + 7] = bodyLength >>> 8;
}

function writeCrc(dst: Uint8Array, offset: number, bodyLength: number): void {
  const end = offset + HEADER_LENGTH + bodyLength;
  const crc = crc32(dst, offset + 4, end);
  dst[end] = crc & 0xff;
  dst[end + 1] = (crc >>> 8) & 0xff;
  dst[end + 2] = (crc >>> 16) & 0xff;
  dst[end + 3] = crc >>> 24;
}

/** Total bytes of a samples frame carrying `frames` instants. */
export function samplesFrameLength(channels: number, format: SampleFormat, frames: number): number {
  return HEADER_LENGTH + SAMPLES_PREFIX + channels * bytesPerSample(format) * frames + CRC_LENGTH;
}

/**
 * Writes one samples frame into dst at offset: data[c][start..start+frames) in counts, sequence = index of the
 * first instant mod 2^32. Returns the bytes written. Throws RangeError when the frame would not fit the protocol.
 */
export function encodeSamplesFrame(
  dst: Uint8Array,
  offset: number,
  sequence: number,
  format: SampleFormat,
  data: readonly Float64Array[],
  start: number,
  frames: number,
): number {
  const channels = data.length;
  if (channels < 1 || channels > MAX_CHANNELS)
    throw new RangeError(`samples frame: channel count must be 1..${MAX_CHANNELS}, got ${channels}`);
  const body = SAMPLES_PREFIX + channels * bytesPerSample(format) * frames;
  if (frames < 1 || body > MAX_BODY)
    throw new RangeError(`samples frame: ${frames} instants do not fit one frame (body ≤ ${MAX_BODY} bytes)`);
  const total = HEADER_LENGTH + body + CRC_LENGTH;
  if (offset + total > dst.length)
    throw new RangeError(`samples frame: needs ${total} bytes at offset ${offset}, buffer has ${dst.length}`);
  writeHeader(dst, offset, KIND_SAMPLES, body);
  const b = offset + HEADER_LENGTH;
  const seq = sequence >>> 0;
  dst[b] = channels;
  dst[b + 1] = formatCode(format);
  dst[b + 2] = seq & 0xff;
  dst[b + 3] = (seq >>> 8) & 0xff;
  dst[b + 4] = (seq >>> 16) & 0xff;
  dst[b + 5] = seq >>> 24;
  encodeInterleaved(dst, b + SAMPLES_PREFIX, format, data, start, frames);
  writeCrc(dst, offset, body);
  return total;
}

/** A complete descriptor frame. */
export function encodeDescriptorFrame(d: BoardDescriptor): Uint8Array {
  const body = descriptorToBytes(d);
  if (body.length > MAX_BODY)
    throw new RangeError(`descriptor: ${body.length} bytes of JSON exceed one frame (${MAX_BODY}); shorten names`);
  const out = new Uint8Array(HEADER_LENGTH + body.length + CRC_LENGTH);
  writeHeader(out, 0, KIND_DESCRIPTOR, body.length);
  out.set(body, HEADER_LENGTH);
  writeCrc(out, 0, body.length);
  return out;
}

/** The host → board describe request (12 bytes, constant). */
export function encodeDescribeRequest(): Uint8Array {
  const out = new Uint8Array(HEADER_LENGTH + CRC_LENGTH);
  writeHeader(out, 0, KIND_DESCRIBE_REQUEST, 0);
  writeCrc(out, 0, 0);
  return out;
}
