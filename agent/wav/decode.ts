// De-interleaves little-endian WAV frames into one Float64Array per channel, times a per-channel factor.
// One loop per encoding so each stays monomorphic; no allocation.
import type { SampleEncoding } from './format.ts';

/**
 * Decodes `frames` frames starting at byte 0 of `bytes` into out[c][outStart + i] = sample(i, c) * factor[c].
 * `bytes` must hold frames × channels × bytes-per-sample bytes; `view` is a DataView over the same bytes (the
 * caller keeps one, so a block allocates nothing).
 */
export function decodeFrames(
  encoding: SampleEncoding,
  bytes: Uint8Array,
  view: DataView,
  frames: number,
  out: Float64Array[],
  factor: Float64Array,
  outStart = 0,
): void {
  const channels = out.length;
  for (let c = 0; c < channels; c++) {
    const dst = out[c];
    const k = factor[c];
    switch (encoding) {
      case 'int16': {
        const stride = 2 * channels;
        for (let i = 0, p = 2 * c; i < frames; i++, p += stride) dst[outStart + i] = view.getInt16(p, true) * k;
        break;
      }
      case 'int24': {
        const stride = 3 * channels;
        for (let i = 0, p = 3 * c; i < frames; i++, p += stride) {
          // Sign-extend 24 bits through the top of a 32-bit int.
          const v = ((bytes[p] | (bytes[p + 1] << 8) | (bytes[p + 2] << 16)) << 8) >> 8;
          dst[outStart + i] = v * k;
        }
        break;
      }
      case 'int32': {
        const stride = 4 * channels;
        for (let i = 0, p = 4 * c; i < frames; i++, p += stride) dst[outStart + i] = view.getInt32(p, true) * k;
        break;
      }
      case 'float32': {
        const stride = 4 * channels;
        for (let i = 0, p = 4 * c; i < frames; i++, p += stride) dst[outStart + i] = view.getFloat32(p, true) * k;
        break;
      }
      case 'float64': {
        const stride = 8 * channels;
        for (let i = 0, p = 8 * c; i < frames; i++, p += stride) dst[outStart + i] = view.getFloat64(p, true) * k;
        break;
      }
    }
  }
}
