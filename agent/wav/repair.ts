// Fixes the header of a recording left by a crash: the data chunk is taken to run to the end of the file (as our
// writer lays it out: 'data' last), cut to whole frames, and the RIFF/data/fact sizes (RF64 past 4 GiB) rewritten.
import { WavError, wavIoError } from './errors.ts';
import { isChunkId, readWavLayout, type Container } from './header.ts';
import { sizePatches } from './sizes.ts';
import { openRegularFile } from './regular-file.ts';

export interface RepairResult {
  path: string;
  container: Container;
  /** Whole frames in the repaired file. */
  frames: number;
  /** Data bytes the header declared before the repair. */
  declaredBefore: number;
  /** Bytes of an incomplete last frame that were cut off. */
  droppedBytes: number;
  /** False when the header was already right and nothing was written. */
  changed: boolean;
}

export async function repairWav(path: string): Promise<RepairResult> {
  let fh;
  try {
    fh = await openRegularFile(path, true);
  } catch (err) {
    throw wavIoError(err, path, 'open');
  }
  try {
    const layout = await readWavLayout(fh, path);
    const { blockAlign } = layout.format;
    const declaredEnd = layout.dataOffset + layout.declaredDataBytes;
    // Our own recordings put 'data' last, so whatever follows the declared size is samples: no guessing there.
    if (!layout.ours && layout.declaredDataBytes > 0 && declaredEnd + 8 <= layout.fileBytes) {
      const next = new Uint8Array(8);
      await fh.read(next, 0, 8, declaredEnd + (layout.declaredDataBytes & 1));
      if (isChunkId(next)) {
        throw new WavError(
          'WAV_MISUSE',
          `${path}: a chunk follows the sample data, so its size is not from a crash; the file needs no repair.`,
        );
      }
    }
    const available = layout.fileBytes - layout.dataOffset;
    const frames = Math.floor(available / blockAlign);
    const dataBytes = frames * blockAlign;
    const droppedBytes = available - dataBytes;
    const fields = {
      ds64Offset: layout.ds64Offset,
      dataSizeOffset: layout.dataSizeOffset,
      factOffset: layout.factOffset,
      dataOffset: layout.dataOffset,
    };
    const result = sizePatches(fields, dataBytes, frames, layout.container === 'RF64');
    if (!result) {
      throw new WavError(
        'WAV_UNSUPPORTED',
        `${path}: ${dataBytes} data bytes need RF64 but the file has no JUNK chunk reserved for ds64; copy it with a tool that writes RF64.`,
      );
    }
    const changed =
      droppedBytes > 0 || layout.declaredDataBytes !== dataBytes || result.rf64 !== (layout.container === 'RF64');
    if (changed) {
      if (droppedBytes > 0) await fh.truncate(layout.dataOffset + dataBytes);
      if (dataBytes & 1) await fh.write(new Uint8Array(1), 0, 1, layout.dataOffset + dataBytes); // RIFF pad byte
      for (const p of result.patches) await fh.write(p.bytes, 0, p.bytes.length, p.offset);
      await fh.datasync();
    }
    return {
      path,
      container: result.rf64 ? 'RF64' : 'RIFF',
      frames,
      declaredBefore: layout.declaredDataBytes,
      droppedBytes,
      changed,
    };
  } catch (err) {
    throw wavIoError(err, path, 'write');
  } finally {
    await fh.close();
  }
}
