// Interleaved little-endian sample payloads ↔ per-channel Float64Array counts.
// Integer formats are two's complement; float32 is IEEE 754 binary32. Hot loops: indexed, no allocation.
import { bytesPerSample, formatFullScale, type SampleFormat } from './protocol.ts';

// Scratch for unaligned float32 reads/writes (a Float32Array view needs 4-byte alignment).
const scratchBytes = new Uint8Array(4);
const scratchFloat = new Float32Array(scratchBytes.buffer);
const LITTLE_ENDIAN = new Uint8Array(new Uint32Array([1]).buffer)[0] === 1;
if (!LITTLE_ENDIAN) throw new Error('floorline framing assumes a little-endian host (x86-64, ARM).');

/**
 * Decodes `frames` interleaved instants of `channels` samples from src[offset..] into out[c][outOffset..].
 */
export function decodeInterleaved(
  src: Uint8Array,
  offset: number,
  format: SampleFormat,
  channels: number,
  frames: number,
  out: readonly Float64Array[],
  outOffset: number,
): void {
  for (let c = 0; c < channels; c++) {
    const dst = out[c];
    switch (format) {
      case 'int16': {
        const stride = 2 * channels;
        let o = offset + 2 * c;
        for (let i = 0; i < frames; i++, o += stride) dst[outOffset + i] = ((src[o] | (src[o + 1] << 8)) << 16) >> 16;
        break;
      }
      case 'int24': {
        const stride = 3 * channels;
        let o = offset + 3 * c;
        for (let i = 0; i < frames; i++, o += stride) {
          dst[outOffset + i] = ((src[o] | (src[o + 1] << 8) | (src[o + 2] << 16)) << 8) >> 8;
        }
        break;
      }
      case 'int32': {
        const stride = 4 * channels;
        let o = offset + 4 * c;
        for (let i = 0; i < frames; i++, o += stride) {
          dst[outOffset + i] = src[o] | (src[o + 1] << 8) | (src[o + 2] << 16) | (src[o + 3] << 24);
        }
        break;
      }
      case 'float32': {
        const stride = 4 * channels;
        let o = offset + 4 * c;
        const sb = scratchBytes;
        const sf = scratchFloat;
        for (let i = 0; i < frames; i++, o += stride) {
          sb[0] = src[o];
          sb[1] = src[o + 1];
          sb[2] = src[o + 2];
          sb[3] = src[o + 3];
          dst[outOffset + i] = sf[0];
        }
        break;
      }
    }
  }
}

/**
 * Encodes data[c][start..start+frames) interleaved into dst[offset..]. Integer formats round to nearest and
 * saturate at the format's limits (an ADC cannot report beyond its end codes); float32 rounds to binary32.
 * Returns the number of bytes written.
 */
export function encodeInterleaved(
  dst: Uint8Array,
  offset: number,
  format: SampleFormat,
  data: readonly Float64Array[],
  start: number,
  frames: number,
): number {
  const channels = data.length;
  const bps = bytesPerSample(format);
  // Two's complement end codes (unused for float32, whose full scale is Infinity).
  const hi = formatFullScale(format);
  const lo = -hi - 1;
  for (let c = 0; c < channels; c++) {
    const src = data[c];
    const stride = bps * channels;
    let o = offset + bps * c;
    if (format === 'float32') {
      const sb = scratchBytes;
      const sf = scratchFloat;
      for (let i = 0; i < frames; i++, o += stride) {
        sf[0] = src[start + i];
        dst[o] = sb[0];
        dst[o + 1] = sb[1];
        dst[o + 2] = sb[2];
        dst[o + 3] = sb[3];
      }
      continue;
    }
    for (let i = 0; i < frames; i++, o += stride) {
      let v = Math.round(src[start + i]);
      if (!(v >= lo))
        v = lo; // also maps NaN to the low end code
      else if (v > hi) v = hi;
      dst[o] = v & 0xff;
      dst[o + 1] = (v >> 8) & 0xff;
      if (bps > 2) dst[o + 2] = (v >> 16) & 0xff;
      if (bps > 3) dst[o + 3] = (v >> 24) & 0xff;
    }
  }
  return bps * channels * frames;
}
