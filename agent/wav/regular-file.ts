// Opens input files only when they are regular files: a FIFO would hang the read forever and a device
// (a sidecar symlinked to /dev/zero) would never end. O_NONBLOCK makes the open itself return at once for a
// FIFO; on a regular file it changes nothing.
import { constants } from 'node:fs';
import { open, type FileHandle } from 'node:fs/promises';
import { WavError } from './errors.ts';
import { notRegularFile } from '../input-file.ts';

export async function openRegularFile(path: string, writable = false): Promise<FileHandle> {
  const fh = await open(path, (writable ? constants.O_RDWR : constants.O_RDONLY) | constants.O_NONBLOCK);
  try {
    const what = notRegularFile(await fh.stat());
    if (what) throw new WavError('WAV_IO', `${path} is ${what}; give a regular file.`);
    return fh;
  } catch (err) {
    await fh.close();
    throw err;
  }
}

/** Reads a small regular text file whole, refusing one larger than maxBytes before reading it. */
export async function readSmallTextFile(path: string, maxBytes: number): Promise<string> {
  const fh = await openRegularFile(path);
  try {
    const { size } = await fh.stat();
    if (size > maxBytes)
      throw new WavError(
        'WAV_BAD_METADATA',
        `${path} is ${size} bytes, more than the ${maxBytes} a metadata file may be; fix or delete it.`,
      );
    const buf = Buffer.alloc(size);
    const { bytesRead } = await fh.read(buf, 0, size, 0);
    return buf.subarray(0, bytesRead).toString('utf8');
  } finally {
    await fh.close();
  }
}
