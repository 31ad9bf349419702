// Constants of the floorline board link (binary framed mode). The layout is documented in PROTOCOL.md beside
// this file; keep both in step.

/** Sync word opening every frame. Chosen so that no proper prefix equals a suffix (resync never skips a frame). */
export const SYNC = Uint8Array.from([0xfa, 0x57, 0x0d, 0xb1]);
export const SYNC_LENGTH = 4;
export const SERIAL_PROTOCOL_VERSION = 1;

/** sync(4) version(1) kind(1) body length(2, LE). */
export const HEADER_LENGTH = 8;
export const CRC_LENGTH = 4;
export const MAX_BODY = 0xffff;
export const MAX_FRAME = HEADER_LENGTH + MAX_BODY + CRC_LENGTH;

export const KIND_SAMPLES = 0x01;
export const KIND_DESCRIPTOR = 0x02;
/** Host → board: "send your descriptor". Empty body. */
export const KIND_DESCRIBE_REQUEST = 0x10;

/** Samples body: channels(1) format(1) sequence(4, LE) then interleaved samples. */
export const SAMPLES_PREFIX = 6;
export { MAX_CHANNELS } from '../../protocol/limits.ts';

export type SampleFormat = 'int16' | 'int24' | 'int32' | 'float32';
export const SAMPLE_FORMATS: readonly SampleFormat[] = ['int16', 'int24', 'int32', 'float32'];

/** Wire code of each format (index + 1 of SAMPLE_FORMATS). */
export function formatCode(format: SampleFormat): number {
  const i = SAMPLE_FORMATS.indexOf(format);
  if (i < 0) throw new RangeError(`sample format must be one of ${SAMPLE_FORMATS.join(', ')}, got ${String(format)}`);
  return i + 1;
}

/** Format of a wire code, or undefined for an unknown code. */
export function formatOfCode(code: number): SampleFormat | undefined {
  return SAMPLE_FORMATS[code - 1];
}

const BYTES: Record<SampleFormat, number> = { int16: 2, int24: 3, int32: 4, float32: 4 };

export function bytesPerSample(format: SampleFormat): number {
  return BYTES[format];
}

/** Largest magnitude an integer format holds (two's complement positive limit); float32 has no code limit. */
export function formatFullScale(format: SampleFormat): number {
  switch (format) {
    case 'int16':
      return 32767;
    case 'int24':
      return 8388607;
    case 'int32':
      return 2147483647;
    case 'float32':
      return Infinity;
  }
}

/** Most sample instants one frame can carry for the given layout. */
export function maxFramesPerFrame(channels: number, format: SampleFormat): number {
  return Math.floor((MAX_BODY - SAMPLES_PREFIX) / (channels * bytesPerSample(format)));
}
