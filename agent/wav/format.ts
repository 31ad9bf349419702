// The 'fmt ' chunk: which sample encodings we decode, and how to recognise them.
// Sources: Microsoft "Multimedia Programming Interface and Data Specifications 1.0" (1991) for RIFF/WAVE and
// WAVEFORMATEX; Microsoft "WAVEFORMATEXTENSIBLE" (KSDATAFORMAT_SUBTYPE_* GUIDs); EBU Tech 3306 (RF64).
import { MAX_CHANNELS, rateProblem } from '../../protocol/limits.ts';
import { WavError } from './errors.ts';

export const WAVE_FORMAT_PCM = 0x0001;
export const WAVE_FORMAT_IEEE_FLOAT = 0x0003;
export const WAVE_FORMAT_ALAW = 0x0006;
export const WAVE_FORMAT_MULAW = 0x0007;
export const WAVE_FORMAT_EXTENSIBLE = 0xfffe;

/** The sample encodings the reader decodes. */
export type SampleEncoding = 'int16' | 'int24' | 'int32' | 'float32' | 'float64';

export interface WavFormat {
  encoding: SampleEncoding;
  /** Format tag after resolving WAVE_FORMAT_EXTENSIBLE's sub-format. */
  formatTag: number;
  extensible: boolean;
  channels: number;
  sampleRate: number;
  /** Bytes per frame (all channels of one sample instant). */
  blockAlign: number;
  /** Container size of one sample in bytes. */
  bytesPerSample: number;
  /** Significant bits (wValidBitsPerSample for extensible, else the container size). */
  validBits: number;
  /** Speaker-position mask of an extensible header, 0 otherwise. */
  channelMask: number;
}

// KSDATAFORMAT_SUBTYPE_* GUIDs are {TTTTTTTT-0000-0010-8000-00AA00389B71} with the format tag in the first field;
// bytes 26..39 as stored (upper half of the tag, then the fixed fields; first three fields little-endian).
const GUID_TAIL = Uint8Array.from([0x00, 0x00, 0x00, 0x00, 0x10, 0x00, 0x80, 0x00, 0x00, 0xaa, 0x00, 0x38, 0x9b, 0x71]);

function tagName(tag: number): string {
  switch (tag) {
    case WAVE_FORMAT_ALAW:
      return 'A-law (format 6)';
    case WAVE_FORMAT_MULAW:
      return 'μ-law (format 7)';
    case 0x0002:
      return 'MS ADPCM (format 2)';
    case 0x0011:
      return 'IMA ADPCM (format 0x11)';
    case 0x0055:
      return 'MPEG layer 3 (format 0x55)';
    default:
      return `format tag 0x${tag.toString(16).padStart(4, '0')}`;
  }
}

const CONVERT_HINT =
  'convert it to 16/24/32-bit PCM or 32/64-bit float WAV first (e.g. `sox IN.wav -b 24 -e signed OUT.wav`)';

/** Parses the body of a 'fmt ' chunk (without its 8-byte header). `path` only labels errors. */
export function parseFmtChunk(body: Uint8Array, path: string): WavFormat {
  if (body.length < 16) {
    throw new WavError(
      'WAV_BAD_HEADER',
      `${path}: the 'fmt ' chunk is ${body.length} bytes, shorter than the 16 every WAV needs; the file is damaged.`,
    );
  }
  const v = new DataView(body.buffer, body.byteOffset, body.byteLength);
  let formatTag = v.getUint16(0, true);
  const channels = v.getUint16(2, true);
  const sampleRate = v.getUint32(4, true);
  const blockAlign = v.getUint16(12, true);
  const bitsPerSample = v.getUint16(14, true);
  let validBits = bitsPerSample;
  let channelMask = 0;
  let extensible = false;
  if (formatTag === WAVE_FORMAT_EXTENSIBLE) {
    const cbSize = body.length >= 18 ? v.getUint16(16, true) : 0;
    if (cbSize < 22 || body.length < 40) {
      throw new WavError(
        'WAV_BAD_HEADER',
        `${path}: WAVE_FORMAT_EXTENSIBLE header is too short (${body.length} bytes, needs 40); the file is damaged.`,
      );
    }
    extensible = true;
    validBits = v.getUint16(18, true);
    channelMask = v.getUint32(20, true);
    for (let i = 0; i < GUID_TAIL.length; i++) {
      if (body[26 + i] !== GUID_TAIL[i]) {
        const hex = Array.from(body.subarray(24, 40), (b) => b.toString(16).padStart(2, '0')).join('');
        throw new WavError(
          'WAV_UNSUPPORTED',
          `${path}: WAVE_FORMAT_EXTENSIBLE with an unknown sub-format GUID (${hex}); ${CONVERT_HINT}.`,
        );
      }
    }
    formatTag = v.getUint16(24, true);
  }
  if (channels === 0) throw new WavError('WAV_BAD_HEADER', `${path}: the header says 0 channels; the file is damaged.`);
  if (sampleRate === 0)
    throw new WavError('WAV_BAD_HEADER', `${path}: the header says a sample rate of 0 Hz; the file is damaged.`);
  // Checked before any buffer is sized by the channel count.
  if (channels > MAX_CHANNELS)
    throw new WavError(
      'WAV_UNSUPPORTED',
      `${path}: the header says ${channels} channels; floorline reads at most ${MAX_CHANNELS}.`,
    );
  const rate = rateProblem(sampleRate);
  if (rate) throw new WavError('WAV_UNSUPPORTED', `${path}: the header's ${rate}.`);

  let encoding: SampleEncoding | undefined;
  if (formatTag === WAVE_FORMAT_PCM) {
    if (bitsPerSample === 16) encoding = 'int16';
    else if (bitsPerSample === 24) encoding = 'int24';
    else if (bitsPerSample === 32) encoding = 'int32';
    else {
      throw new WavError(
        'WAV_UNSUPPORTED',
        `${path}: ${bitsPerSample}-bit PCM is not supported (16, 24 and 32-bit are); ${CONVERT_HINT}.`,
      );
    }
  } else if (formatTag === WAVE_FORMAT_IEEE_FLOAT) {
    if (bitsPerSample === 32) encoding = 'float32';
    else if (bitsPerSample === 64) encoding = 'float64';
    else
      throw new WavError(
        'WAV_UNSUPPORTED',
        `${path}: ${bitsPerSample}-bit float is not supported (32 and 64-bit are); ${CONVERT_HINT}.`,
      );
  } else {
    throw new WavError('WAV_UNSUPPORTED', `${path}: ${tagName(formatTag)} is not supported; ${CONVERT_HINT}.`);
  }
  const bytesPerSample = bitsPerSample / 8;
  if (validBits === 0 || validBits > bitsPerSample) {
    throw new WavError(
      'WAV_BAD_HEADER',
      `${path}: ${validBits} valid bits in a ${bitsPerSample}-bit container cannot be right; the file is damaged.`,
    );
  }
  if (blockAlign !== bytesPerSample * channels) {
    throw new WavError(
      'WAV_BAD_HEADER',
      `${path}: block align ${blockAlign} does not match ${channels} channel(s) × ${bytesPerSample} bytes; the file is damaged or uses padded containers we do not read.`,
    );
  }
  return { encoding, formatTag, extensible, channels, sampleRate, blockAlign, bytesPerSample, validBits, channelMask };
}

/**
 * Full-scale divisor for integer PCM: a sample of value -2^(bits-1) reads as -1 FS (common practice, as
 * libsndfile and soundfile normalise). Integers are left-justified in their container, so the container size
 * sets the scale even when fewer bits are valid (WAVEFORMATEXTENSIBLE rule).
 */
export function fullScaleCounts(encoding: SampleEncoding): number {
  switch (encoding) {
    case 'int16':
      return 32768;
    case 'int24':
      return 8388608;
    case 'int32':
      return 2147483648;
    default:
      return 1;
  }
}
