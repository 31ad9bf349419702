// The binary frames the agent sends over the WebSocket: spectra, the baseline, and the latest time samples.
// Layout (little-endian), chosen so every array view is naturally aligned:
//   0  u32  magic 0x31574c46 ("FLW1" read as bytes)
//   4  u16  WIRE_PROTOCOL_VERSION
//   6  u16  kind (FrameKind)
//   8  u32  sequence number (per kind, wraps at 2^32)
//  12  u16  channel count C
//  14  u16  spectrum context id (low 16 bits)
//  16  u32  values per channel L (bins for spectra, samples for traces)
//  20  u32  reserved, 0
//  24  f64  sample: index of the last sample used (exact for indices below 2^53)
//  32  f64  sample rate, Hz
//  40  f64  bin spacing, Hz (0 for traces)
//  48  f64 × C  per-channel averages (equivalent number of averages; 0 for traces)
//  48+8C  f32 × C·L  channel-major values: PSD in unit²/Hz, or samples in the channel unit
// Pure TypeScript on ArrayBuffer/DataView: the dashboard decodes with the same module.
import { WIRE_PROTOCOL_VERSION } from './messages.ts';

export const FRAME_MAGIC = 0x31574c46;
export const FRAME_HEADER_BYTES = 48;

export const FrameKind = { spectrum: 1, baseline: 2, trace: 3 } as const;
export type FrameKindName = keyof typeof FrameKind;
const KIND_NAMES: Record<number, FrameKindName> = { 1: 'spectrum', 2: 'baseline', 3: 'trace' };

export interface FrameHeader {
  kind: FrameKindName;
  seq: number;
  channels: number;
  contextId: number;
  length: number;
  sample: number;
  sampleRate: number;
  binHz: number;
}

export interface DecodedFrame extends FrameHeader {
  averages: Float64Array;
  /** One view per channel into the frame's bytes (no copy). */
  values: Float32Array[];
}

/** A frame that does not follow the layout above; `code` is stable. */
export class FrameFormatError extends Error {
  override readonly name = 'FrameFormatError';
  constructor(
    readonly code: 'short' | 'magic' | 'version' | 'kind' | 'size',
    message: string,
  ) {
    super(message);
  }
}

export function frameBytes(channels: number, length: number): number {
  return FRAME_HEADER_BYTES + 8 * channels + 4 * channels * length;
}

/**
 * Writes one frame into `out` (which must hold frameBytes(C, L) bytes from offset 0) and returns its length.
 * `values[c]` supplies at least `length` numbers; float64 inputs are rounded to float32.
 */
export function encodeFrame(
  out: ArrayBuffer,
  header: FrameHeader,
  averages: ArrayLike<number> | null,
  values: ArrayLike<ArrayLike<number>>,
): number {
  const { channels, length } = header;
  if (!Number.isInteger(channels) || channels < 1 || channels > 0xffff) {
    throw new RangeError(`encodeFrame: channels must be an integer 1..65535, got ${channels}`);
  }
  if (!Number.isInteger(length) || length < 0 || length > 0xffffffff) {
    throw new RangeError(`encodeFrame: length must be a non-negative 32-bit integer, got ${length}`);
  }
  if (values.length !== channels)
    throw new RangeError(`encodeFrame: ${values.length} value arrays for ${channels} channels`);
  const total = frameBytes(channels, length);
  if (out.byteLength < total)
    throw new RangeError(`encodeFrame: buffer of ${out.byteLength} bytes, frame needs ${total}`);
  const view = new DataView(out);
  view.setUint32(0, FRAME_MAGIC, true);
  view.setUint16(4, WIRE_PROTOCOL_VERSION, true);
  view.setUint16(6, FrameKind[header.kind], true);
  view.setUint32(8, header.seq >>> 0, true);
  view.setUint16(12, channels, true);
  view.setUint16(14, header.contextId & 0xffff, true);
  view.setUint32(16, length, true);
  view.setUint32(20, 0, true);
  view.setFloat64(24, header.sample, true);
  view.setFloat64(32, header.sampleRate, true);
  view.setFloat64(40, header.binHz, true);
  const avg = new Float64Array(out, FRAME_HEADER_BYTES, channels);
  for (let c = 0; c < channels; c++) avg[c] = averages ? averages[c] : 0;
  const data = new Float32Array(out, FRAME_HEADER_BYTES + 8 * channels, channels * length);
  for (let c = 0; c < channels; c++) {
    const src = values[c];
    if (src.length < length)
      throw new RangeError(`encodeFrame: channel ${c} has ${src.length} values, needs ${length}`);
    const base = c * length;
    for (let i = 0; i < length; i++) data[base + i] = src[i];
  }
  return total;
}

/** Reads a frame. Views alias `buf`; a misaligned slice (e.g. a Node Buffer from a pool) is copied first. */
export function decodeFrame(buf: ArrayBuffer, byteOffset = 0, byteLength = buf.byteLength - byteOffset): DecodedFrame {
  if (byteOffset % 8 !== 0) {
    const copy = new Uint8Array(byteLength);
    copy.set(new Uint8Array(buf, byteOffset, byteLength));
    return decodeFrame(copy.buffer, 0, byteLength);
  }
  if (byteLength < FRAME_HEADER_BYTES)
    throw new FrameFormatError(
      'short',
      `frame of ${byteLength} bytes is shorter than its ${FRAME_HEADER_BYTES}-byte header`,
    );
  const view = new DataView(buf, byteOffset, byteLength);
  const magic = view.getUint32(0, true);
  if (magic !== FRAME_MAGIC)
    throw new FrameFormatError('magic', `frame magic 0x${magic.toString(16)} is not 0x${FRAME_MAGIC.toString(16)}`);
  const version = view.getUint16(4, true);
  if (version !== WIRE_PROTOCOL_VERSION) {
    throw new FrameFormatError(
      'version',
      `frame protocol version ${version}; this side speaks ${WIRE_PROTOCOL_VERSION}: reload the page or update the agent`,
    );
  }
  const kind = KIND_NAMES[view.getUint16(6, true)];
  if (kind === undefined) throw new FrameFormatError('kind', `unknown frame kind ${view.getUint16(6, true)}`);
  const channels = view.getUint16(12, true);
  const length = view.getUint32(16, true);
  const need = frameBytes(channels, length);
  if (channels < 1 || need !== byteLength) {
    throw new FrameFormatError(
      'size',
      `frame of ${byteLength} bytes; ${channels} channels × ${length} values need ${need}`,
    );
  }
  const averages = new Float64Array(buf, byteOffset + FRAME_HEADER_BYTES, channels);
  const values: Float32Array[] = [];
  const dataOffset = byteOffset + FRAME_HEADER_BYTES + 8 * channels;
  for (let c = 0; c < channels; c++) values.push(new Float32Array(buf, dataOffset + 4 * c * length, length));
  return {
    kind,
    seq: view.getUint32(8, true),
    channels,
    contextId: view.getUint16(14, true),
    length,
    sample: view.getFloat64(24, true),
    sampleRate: view.getFloat64(32, true),
    binHz: view.getFloat64(40, true),
    averages,
    values,
  };
}
