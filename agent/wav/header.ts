// Walks the chunks of a RIFF/WAVE or RF64 file and works out where the whole frames of sample data are.
// RIFF rule: a chunk is id(4) size(4, little-endian) body, padded to an even length. RF64 (EBU Tech 3306) puts
// the 64-bit sizes in a 'ds64' chunk that must come first and writes 0xFFFFFFFF in the 32-bit fields.
import type { FileHandle } from 'node:fs/promises';
import { WavError } from './errors.ts';
import { parseFmtChunk, type WavFormat } from './format.ts';
import { MAX_METADATA_BYTES } from '../../protocol/limits.ts';
import { METADATA_CHUNK_ID, parseMetadataText, type RecordingMetadata } from './metadata.ts';

export type Container = 'RIFF' | 'RF64';

export interface WavLayout {
  path: string;
  container: Container;
  format: WavFormat;
  fileBytes: number;
  /** File offset of the first data byte. */
  dataOffset: number;
  /** Offset of the data chunk's 32-bit size field (for patching). */
  dataSizeOffset: number;
  /** Offset of the ds64 body (RF64), or of the reserved JUNK body that can become ds64; -1 if neither. */
  ds64Offset: number;
  /** Offset of the 'fact' body (its sample count), -1 if none. */
  factOffset: number;
  /** Data size the header declares (after ds64); may be 0 or larger than the file after a crash. */
  declaredDataBytes: number;
  /** Whole frames readable. */
  frames: number;
  embedded?: RecordingMetadata;
  /** The file carries our embedded metadata: floorline wrote it, so 'data' is its last chunk and every byte after
   * the data offset is samples (a crash can leave the declared size behind what is on disk). */
  ours: boolean;
  /** Things the reader tolerated (truncation, unpatched sizes), as sentences. */
  warnings: string[];
}

const U32_UNSET = 0xffffffff;
/** Most chunks walked before the data. */
const MAX_CHUNKS = 1000;
const MAX_FMT_BYTES = 1024;

async function readExactly(fh: FileHandle, length: number, position: number): Promise<Uint8Array> {
  const buf = new Uint8Array(length);
  let got = 0;
  while (got < length) {
    const { bytesRead } = await fh.read(buf, got, length - got, position + got);
    if (bytesRead === 0) break;
    got += bytesRead;
  }
  return got === length ? buf : buf.subarray(0, got);
}

function fourcc(b: Uint8Array, at: number): string {
  return String.fromCharCode(b[at], b[at + 1], b[at + 2], b[at + 3]);
}

/** RIFF chunk ids are four printable ASCII characters (space-padded, e.g. 'fmt '). */
export function isChunkId(b: Uint8Array): boolean {
  for (let i = 0; i < 4; i++) if (!(b[i] >= 0x20 && b[i] <= 0x7e)) return false;
  return true;
}

function u32(b: Uint8Array, at: number): number {
  return (b[at] | (b[at + 1] << 8) | (b[at + 2] << 16)) + b[at + 3] * 0x1000000;
}

function u64(b: Uint8Array, at: number): number {
  const value = u32(b, at) + u32(b, at + 4) * 0x100000000;
  if (!Number.isSafeInteger(value)) throw new RangeError('64-bit size beyond 2^53');
  return value;
}

/** Reads the header of an open WAV file. Throws WavError naming `path` and the fix. */
export async function readWavLayout(fh: FileHandle, path: string): Promise<WavLayout> {
  const fileBytes = (await fh.stat()).size;
  const head = await readExactly(fh, 12, 0);
  const magic = head.length >= 4 ? fourcc(head, 0) : '';
  if (head.length < 12 || (magic !== 'RIFF' && magic !== 'RF64' && magic !== 'BW64') || fourcc(head, 8) !== 'WAVE') {
    const shown = head.length >= 4 ? JSON.stringify(fourcc(head, 0)) : `${fileBytes} bytes`;
    throw new WavError(
      'WAV_NOT_RIFF',
      `${path} is not a WAV file (starts with ${shown}, not "RIFF…WAVE"); give a RIFF/WAVE or RF64 recording.`,
    );
  }
  const container: Container = magic === 'RIFF' ? 'RIFF' : 'RF64';
  const warnings: string[] = [];
  let format: WavFormat | undefined;
  let ds64Offset = -1;
  let factOffset = -1;
  let ds64DataBytes = -1;
  let dataOffset = -1;
  let dataSizeOffset = -1;
  let declared = 0;
  let available = 0;
  let embedded: RecordingMetadata | undefined;

  let pos = 12;
  let chunks = 0;
  while (pos + 8 <= fileBytes) {
    // A real WAV has a handful of chunks; thousands of empty ones are a damaged or hostile file, not worth a walk.
    if (++chunks > MAX_CHUNKS)
      throw new WavError(
        'WAV_BAD_HEADER',
        `${path}: more than ${MAX_CHUNKS} chunks before the samples; the file is damaged.`,
      );
    const ch = await readExactly(fh, 8, pos);
    if (!isChunkId(ch)) {
      // Not a chunk: bytes past the declared data, e.g. samples written after the last header update of a
      // recording that crashed. Stop here rather than walk them 8 bytes at a time.
      warnings.push(
        `${path}: ${fileBytes - pos} bytes after offset ${pos} are not RIFF chunks and were ignored ` +
          `(samples written after the last header update of an interrupted recording? \`floorline repair FILE\` recovers them).`,
      );
      break;
    }
    const id = fourcc(ch, 0);
    const size = u32(ch, 4);
    const body = pos + 8;
    if (id === 'ds64') {
      if (container !== 'RF64') warnings.push(`${path}: a 'ds64' chunk in a plain RIFF file was ignored.`);
      else {
        const b = await readExactly(fh, 24, body);
        if (b.length < 24)
          throw new WavError('WAV_BAD_HEADER', `${path}: the RF64 'ds64' chunk is cut short; the file is damaged.`);
        ds64DataBytes = u64(b, 8);
      }
      ds64Offset = body;
    } else if (id === 'JUNK' && size >= 28 && ds64Offset < 0 && pos === 12) {
      ds64Offset = body; // reserved room for a future ds64 (EBU Tech 3306 §3.3)
    } else if (id === 'fmt ') {
      if (format) {
        throw new WavError(
          'WAV_BAD_HEADER',
          `${path}: a second 'fmt ' chunk at offset ${pos}; a WAV has one format, the file is damaged.`,
        );
      }
      if (body + size > fileBytes)
        throw new WavError(
          'WAV_BAD_HEADER',
          `${path}: the 'fmt ' chunk claims ${size} bytes, past the end of the file; the file is damaged.`,
        );
      format = parseFmtChunk(await readExactly(fh, Math.min(size, MAX_FMT_BYTES), body), path);
    } else if (id === 'fact') {
      factOffset = body;
    } else if (id === METADATA_CHUNK_ID && body + size > fileBytes) {
      throw new WavError(
        'WAV_BAD_HEADER',
        `${path}: the '${METADATA_CHUNK_ID}' chunk claims ${size} bytes, past the end of the file before any 'data'; the file is damaged.`,
      );
    } else if (id === METADATA_CHUNK_ID && size > MAX_METADATA_BYTES) {
      warnings.push(
        `${path}: its '${METADATA_CHUNK_ID}' chunk claims ${size} bytes, over the ${MAX_METADATA_BYTES} allowed; it was ignored.`,
      );
    } else if (id === METADATA_CHUNK_ID) {
      const text = new TextDecoder().decode(await readExactly(fh, size, body));
      try {
        embedded = parseMetadataText(text, `${path} ('${METADATA_CHUNK_ID}' chunk)`);
      } catch (err) {
        warnings.push(`${(err as Error).message} It was ignored; the samples are read without it.`);
      }
    } else if (id === 'data') {
      if (!format)
        throw new WavError(
          'WAV_BAD_HEADER',
          `${path}: 'data' comes before 'fmt '; the file is damaged or not a standard WAV.`,
        );
      dataOffset = body;
      dataSizeOffset = pos + 4;
      available = fileBytes - body;
      if (container === 'RF64' && size === U32_UNSET) {
        if (ds64DataBytes < 0)
          throw new WavError(
            'WAV_BAD_HEADER',
            `${path}: RF64 without a 'ds64' chunk before 'data'; the file is damaged.`,
          );
        declared = ds64DataBytes;
      } else declared = size;
      // An unpatched size (0, or 0xFFFFFFFF in plain RIFF) or one past the end of the file: the rest of the file
      // is the data, and nothing after it can be trusted as chunks.
      if (declared === 0 || (container === 'RIFF' && declared === U32_UNSET) || declared > available) break;
      if (embedded) {
        // Ours: nothing follows 'data', so bytes after the declared size are samples, whatever they look like
        // (small positive float32 samples often read as printable "chunk ids").
        const beyond = available - declared - (declared & 1);
        if (beyond >= format.blockAlign) {
          warnings.push(
            `${path}: ${beyond} bytes after the declared data are samples written after the last header update of an interrupted recording; ` +
              '`floorline repair FILE` recovers them.',
          );
        }
        break;
      }
      pos = body + declared + (declared & 1);
      continue;
    }
    pos = body + size + (size & 1);
  }
  if (!format)
    throw new WavError('WAV_BAD_HEADER', `${path}: no 'fmt ' chunk; the file is damaged or not a standard WAV.`);
  if (dataOffset < 0) throw new WavError('WAV_NO_DATA', `${path}: no 'data' chunk; the file holds no samples.`);

  let usable = declared;
  if (declared === 0 || (container === 'RIFF' && declared === U32_UNSET)) {
    usable = available;
    if (available > 0)
      warnings.push(
        `${path}: the header's data size was never written (the recorder stopped without closing); read the ${available} bytes present.`,
      );
  } else if (declared > available) {
    usable = available;
    warnings.push(
      `${path}: the file is truncated (header says ${declared} data bytes, ${available} present); read to the last whole frame.`,
    );
  }
  const frames = Math.floor(usable / format.blockAlign);
  const partial = usable - frames * format.blockAlign;
  if (partial > 0) warnings.push(`${path}: ${partial} bytes of an incomplete last frame were skipped.`);
  return {
    path,
    container,
    format,
    fileBytes,
    dataOffset,
    dataSizeOffset,
    ds64Offset,
    factOffset,
    declaredDataBytes: declared,
    frames,
    embedded,
    ours: embedded !== undefined,
    warnings,
  };
}
