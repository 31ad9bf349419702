// Streaming WAV reader: blocks of Float64Array per channel in calibrated units, from a reused byte buffer, so a
// file of any size is read in bounded memory.
//
// Units: integer PCM reads as a fraction of full scale ("FS", -32768 → -1 for int16) unless our metadata gives a
// per-count scale, or `scale` (volts per full scale) is given, which makes it "V". Float samples are taken as
// they are, in the unit our metadata names, else "FS"; `scale` multiplies "FS" float samples into V and is
// refused for files already calibrated by their metadata.
import type { FileHandle } from 'node:fs/promises';
import { WavError, wavIoError } from './errors.ts';
import { fullScaleCounts, type WavFormat } from './format.ts';
import { readWavLayout, type Container, type WavLayout } from './header.ts';
import { openRegularFile, readSmallTextFile } from './regular-file.ts';
import { MAX_METADATA_BYTES } from '../../protocol/limits.ts';
import { sidecarPath, parseMetadataText, type RecordingMetadata } from './metadata.ts';
import { decodeFrames } from './decode.ts';

export interface WavReaderOptions {
  /** Frames per block (default 65536). */
  blockFrames?: number;
  /** Volts per full scale for "FS" samples: the result is in V. */
  scale?: number;
  /** Read NAME.wav.json when present (default true). */
  sidecar?: boolean;
}

export interface WavChannel {
  name: string;
  unit: string;
  /** Multiplier from the stored sample to `unit`. */
  factor: number;
  /** From our metadata, when known. */
  fullScaleCounts?: number;
}

export interface WavInfo {
  path: string;
  container: Container;
  format: WavFormat;
  sampleRate: number;
  channels: WavChannel[];
  /** Whole frames in the file. */
  frames: number;
  /** Sample index of the first frame (from our metadata; 0 otherwise). */
  firstSample: number;
  startWallTime?: string;
  metadata?: RecordingMetadata;
  metadataFrom: 'sidecar' | 'chunk' | 'none';
  warnings: string[];
}

/** One block: valid until the next read() (the arrays are reused). */
export interface WavBlock {
  firstSample: number;
  frames: number;
  data: Float64Array[];
}

async function loadSidecar(path: string, warnings: string[]): Promise<RecordingMetadata | undefined> {
  let text: string;
  try {
    text = await readSmallTextFile(sidecarPath(path), MAX_METADATA_BYTES);
  } catch (err) {
    if ((err as NodeJS.ErrnoException).code === 'ENOENT') return undefined; // no sidecar: normal for files from elsewhere
    warnings.push(
      `${err instanceof WavError ? err.message : `${sidecarPath(path)}: ${(err as Error).message}`} It was ignored; the samples are read without it.`,
    );
    return undefined;
  }
  try {
    return parseMetadataText(text, sidecarPath(path));
  } catch (err) {
    warnings.push(`${(err as Error).message} It was ignored; the samples are read without it.`);
    return undefined;
  }
}

function describeChannels(
  layout: WavLayout,
  meta: RecordingMetadata | undefined,
  scale: number | undefined,
): WavChannel[] {
  const { format, path } = layout;
  const isInt = format.encoding.startsWith('int');
  const fsc = fullScaleCounts(format.encoding);
  const out: WavChannel[] = [];
  for (let c = 0; c < format.channels; c++) {
    const m = meta?.channels[c];
    const name = m?.name ?? `ch${c}`;
    let unit = 'FS';
    let factor = isInt ? 1 / fsc : 1;
    if (m && isInt && m.scale !== undefined && m.unit !== 'FS') {
      unit = m.unit; // metadata scale is unit per raw count
      factor = m.scale;
    } else if (m && !isInt) unit = m.unit;
    if (scale !== undefined) {
      if (unit !== 'FS') {
        throw new WavError(
          'WAV_MISUSE',
          `${path}: channel ${name} is already calibrated in ${unit} by its metadata; drop --scale (it applies to full-scale samples only).`,
        );
      }
      unit = 'V';
      factor = (isInt ? 1 / fsc : 1) * scale;
    }
    out.push({ name, unit, factor, fullScaleCounts: m?.fullScaleCounts });
  }
  return out;
}

export class WavReader {
  private position = 0; // next frame to read
  private readonly bytes: Uint8Array;
  private readonly view: DataView;
  private readonly data: Float64Array[];
  private readonly factors: Float64Array;
  private readonly block: WavBlock;

  private constructor(
    private readonly fh: FileHandle,
    private readonly layout: WavLayout,
    readonly info: WavInfo,
    readonly blockFrames: number,
  ) {
    this.bytes = new Uint8Array(blockFrames * layout.format.blockAlign);
    this.view = new DataView(this.bytes.buffer);
    this.data = info.channels.map(() => new Float64Array(blockFrames));
    this.factors = Float64Array.from(info.channels, (c) => c.factor);
    this.block = { firstSample: info.firstSample, frames: 0, data: this.data };
  }

  /** Opens `path` and reads its header and metadata. Throws WavError naming the file and the fix. */
  static async open(path: string, options: WavReaderOptions = {}): Promise<WavReader> {
    const blockFrames = options.blockFrames ?? 65536;
    if (!Number.isInteger(blockFrames) || blockFrames < 1 || blockFrames > 1 << 24) {
      throw new RangeError(`WavReader: blockFrames must be an integer from 1 to 2^24, got ${blockFrames}`);
    }
    if (options.scale !== undefined && !(options.scale > 0 && Number.isFinite(options.scale))) {
      throw new RangeError(`WavReader: scale must be a positive number of volts per full scale, got ${options.scale}`);
    }
    let fh: FileHandle;
    try {
      fh = await openRegularFile(path);
    } catch (err) {
      throw wavIoError(err, path, 'open');
    }
    try {
      const layout = await readWavLayout(fh, path);
      const warnings = [...layout.warnings];
      const fromSidecar = options.sidecar === false ? undefined : await loadSidecar(path, warnings);
      let metadata = fromSidecar ?? layout.embedded;
      const metadataFrom = fromSidecar ? 'sidecar' : layout.embedded ? 'chunk' : 'none';
      if (
        metadata &&
        (metadata.channels.length !== layout.format.channels || metadata.sampleRate !== layout.format.sampleRate)
      ) {
        warnings.push(
          `${path}: its metadata (${metadataFrom}) describes ${metadata.channels.length} channel(s) at ${metadata.sampleRate} Hz but the file has ` +
            `${layout.format.channels} at ${layout.format.sampleRate} Hz; the metadata was ignored.`,
        );
        metadata = undefined;
      }
      const info: WavInfo = {
        path,
        container: layout.container,
        format: layout.format,
        sampleRate: layout.format.sampleRate,
        channels: describeChannels(layout, metadata, options.scale),
        frames: layout.frames,
        firstSample: metadata?.firstSample ?? 0,
        startWallTime: metadata?.startWallTime,
        metadata,
        metadataFrom: metadata ? metadataFrom : 'none',
        warnings,
      };
      return new WavReader(fh, layout, info, blockFrames);
    } catch (err) {
      await fh.close();
      throw wavIoError(err, path, 'read');
    }
  }

  /** Frame index (from 0 at the file's first frame) of the next read. */
  get nextFrame(): number {
    return this.position;
  }

  /** Moves the next read to `frame` (0 ≤ frame ≤ frames), e.g. to loop a replay. */
  seek(frame: number): void {
    if (!Number.isInteger(frame) || frame < 0 || frame > this.info.frames) {
      throw new RangeError(`WavReader.seek: frame must be an integer from 0 to ${this.info.frames}, got ${frame}`);
    }
    this.position = frame;
  }

  /** Reads the next block (at most blockFrames frames), or null at the end. The arrays are reused. */
  async read(): Promise<WavBlock | null> {
    const { blockAlign, encoding } = this.layout.format;
    const want = Math.min(this.blockFrames, this.info.frames - this.position);
    if (want <= 0) return null;
    const length = want * blockAlign;
    const start = this.layout.dataOffset + this.position * blockAlign;
    let got = 0;
    try {
      while (got < length) {
        const { bytesRead } = await this.fh.read(this.bytes, got, length - got, start + got);
        if (bytesRead === 0) break;
        got += bytesRead;
      }
    } catch (err) {
      throw wavIoError(err, this.info.path, 'read');
    }
    const frames = Math.floor(got / blockAlign);
    if (frames === 0) {
      this.info.warnings.push(
        `${this.info.path}: the file ended early at frame ${this.position} (it shrank while being read).`,
      );
      this.position = this.info.frames;
      return null;
    }
    decodeFrames(encoding, this.bytes, this.view, frames, this.data, this.factors);
    this.block.firstSample = this.info.firstSample + this.position;
    this.block.frames = frames;
    this.position += frames;
    return this.block;
  }

  async close(): Promise<void> {
    await this.fh.close();
  }
}

/** Reads a whole (small) file into one Float64Array per channel: for tests and short clips. */
export async function readWavFile(
  path: string,
  options: WavReaderOptions = {},
): Promise<{ info: WavInfo; data: Float64Array[] }> {
  const reader = await WavReader.open(path, options);
  try {
    const data = reader.info.channels.map(() => new Float64Array(reader.info.frames));
    let at = 0;
    for (let b = await reader.read(); b; b = await reader.read()) {
      for (let c = 0; c < data.length; c++) data[c].set(b.data[c].subarray(0, b.frames), at);
      at += b.frames;
    }
    return { info: reader.info, data: at === reader.info.frames ? data : data.map((d) => d.slice(0, at)) };
  } finally {
    await reader.close();
  }
}
