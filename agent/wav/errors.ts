// Errors of the WAV layer: the agent's FloorlineError with the WAV_ codes (agent/errors.ts, docs/ERRORS.md), so
// the CLI prints the message (which names the file and the fix) without a stack trace.
import { FloorlineError, type ErrorCode } from '../errors.ts';

export type WavErrorCode = Extract<ErrorCode, `WAV_${string}`>;

export class WavError extends FloorlineError {
  override readonly name = 'WavError';
  declare readonly code: WavErrorCode;
  constructor(code: WavErrorCode, message: string) {
    super(code, message);
  }
}

/** Turns an operating-system error on `path` into a WavError that says what to do about it. */
export function wavIoError(err: unknown, path: string, doing: 'open' | 'read' | 'write' | 'create'): WavError {
  if (err instanceof WavError) return err;
  const e = err as NodeJS.ErrnoException;
  switch (e?.code) {
    case 'ENOSPC':
    case 'EDQUOT':
      return new WavError(
        'WAV_DISK_FULL',
        `cannot ${doing} ${path}: the disk is full; free some space or record to another folder (--data DIR).`,
      );
    case 'EACCES':
    case 'EPERM':
    case 'EROFS':
      return new WavError(
        'WAV_NO_PERMISSION',
        `cannot ${doing} ${path}: no permission; choose a folder you can ${doing === 'read' || doing === 'open' ? 'read' : 'write'} or fix its permissions.`,
      );
    case 'ENOENT':
      return new WavError(
        'WAV_IO',
        `cannot ${doing} ${path}: no such file or folder; check the path${doing === 'create' ? ' and create the folder first' : ''}.`,
      );
    case 'EISDIR':
      return new WavError('WAV_IO', `cannot ${doing} ${path}: it is a folder; give a .wav file.`);
    default:
      return new WavError('WAV_IO', `cannot ${doing} ${path}: ${e?.message ?? String(err)}.`);
  }
}
