// Small input files (baselines, masks, rig configs) are read only when they are regular files of a bounded size:
// a FIFO would block the read forever, and a device (a file symlinked to /dev/zero) would never end.
import { closeSync, constants, fstatSync, openSync, readSync, type Stats } from 'node:fs';

/** What a path that is not a regular file is ("a FIFO", "a device", …), or null for a regular file. */
export function notRegularFile(st: Stats): string | null {
  if (st.isFile()) return null;
  if (st.isFIFO()) return 'a FIFO';
  if (st.isCharacterDevice() || st.isBlockDevice()) return 'a device';
  if (st.isDirectory()) return 'a folder';
  return 'a special file';
}

/**
 * Reads a regular file of at most maxBytes whole, as UTF-8. Throws an Error whose message says what is wrong
 * ("is a FIFO; give a regular file", "is N bytes, more than …") for the caller to put behind the file's name.
 * O_NONBLOCK lets the open return at once on a FIFO; on a regular file it changes nothing.
 */
export function readSmallTextFileSync(path: string, maxBytes: number): string {
  const fd = openSync(path, constants.O_RDONLY | constants.O_NONBLOCK);
  try {
    const st = fstatSync(fd);
    const what = notRegularFile(st);
    if (what) throw new Error(`it is ${what}, not a regular file`);
    if (st.size > maxBytes) throw new Error(`it is ${st.size} bytes, more than the ${maxBytes} such a file may be`);
    const buf = Buffer.alloc(st.size);
    let got = 0;
    while (got < st.size) {
      const n = readSync(fd, buf, got, st.size - got, got);
      if (n === 0) break;
      got += n;
    }
    return buf.subarray(0, got).toString('utf8');
  } finally {
    closeSync(fd);
  }
}
