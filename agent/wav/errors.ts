// Errors of the WAV layer. Each carries a stable code and exit code 2, so the CLI prints the message (which names
// the file and the fix) without a stack trace.

export type WavErrorCode =
  | 'WAV_NOT_RIFF' // not a RIFF/RF64 WAVE file
  | 'WAV_BAD_HEADER' // a header field that cannot be right (zero channels, block align mismatch)
  | 'WAV_UNSUPPORTED' // an encoding we do not decode (8-bit, A-law, μ-law, ADPCM, 12-bit…)
  | 'WAV_NO_DATA' // no 'data' chunk, or no whole frame in it
  | 'WAV_BAD_METADATA' // our metadata chunk or sidecar is not valid JSON of our schema
  | 'WAV_DISK_FULL'
  | 'WAV_NO_PERMISSION'
  | 'WAV_IO' // any other operating-system error
  | 'WAV_MISUSE'; // API misuse (append after close, wrong channel count)

export class WavError extends Error {
  override readonly name = 'WavError';
  readonly exitCode = 2;
  constructor(
    readonly code: WavErrorCode,
    message: string,
  ) {
    super(message);
  }
}

/** Turns an operating-system error on `path` into a WavError that says what to do about it. */
export function wavIoError(err: unknown, path: string, doing: 'open' | 'read' | 'write' | 'create'): WavError {
  if (err instanceof WavError) return err;
  const e = err as NodeJS.ErrnoException;
  switch (e?.code) {
    case 'ENOSPC':
    case 'EDQUOT':
      return new WavError('WAV_DISK_FULL', `cannot ${doing} ${path}: the disk is full; free some space or record to another folder (--data DIR).`);
    case 'EACCES':
    case 'EPERM':
    case 'EROFS':
      return new WavError('WAV_NO_PERMISSION', `cannot ${doing} ${path}: no permission; choose a folder you can ${doing === 'read' || doing === 'open' ? 'read' : 'write'} or fix its permissions.`);
    case 'ENOENT':
      return new WavError('WAV_IO', `cannot ${doing} ${path}: no such file or folder; check the path${doing === 'create' ? ' and create the folder first' : ''}.`);
    case 'EISDIR':
      return new WavError('WAV_IO', `cannot ${doing} ${path}: it is a folder; give a .wav file.`);
    default:
      return new WavError('WAV_IO', `cannot ${doing} ${path}: ${e?.message ?? String(err)}.`);
  }
}
