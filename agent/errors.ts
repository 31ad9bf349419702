// The agent's one error type: every error meant for the user carries a stable code (listed with its meaning in
// docs/ERRORS.md) and the process exit status, and its message names the thing and the fix. The CLI prints the
// message without a stack trace and exits with the status; the server maps codes to its wire error codes.

/** Every code, with its exit status. A test checks that docs/ERRORS.md lists each one. */
export const ERROR_CODES = {
  USAGE: 2, // how a command was called: a missing or bad flag or argument
  INPUT: 2, // input data that cannot be used as asked (a file too short, a baseline of other settings)
  ANALYSIS_INPUT: 2, // analyze: a span, band or option the recording cannot give
  PATH_OUTSIDE_DATA_FOLDER: 2, // a client- or user-named path that would leave the data folder
  SERVER_CONFIG: 2, // server options that are unsafe or impossible (port in use, wide bind without token)
  RIG_CONFIG: 2, // a rig config file that does not validate
  SERIAL: 2, // a serial port that cannot be found or opened
  STORE_FILE: 2, // a history store that cannot be opened or is not ours
  STORE_LOCKED: 2, // another live agent writes the same history store
  TREND_QUERY: 2, // a trend query the store cannot answer as asked
  EMPTY_SPAN: 2, // report: nothing recorded in the span asked for
  DATA_FOLDER: 2, // the data folder cannot be created or written
  WAV_NOT_RIFF: 2, // not a RIFF/RF64 WAVE file
  WAV_BAD_HEADER: 2, // a header field that cannot be right (zero channels, block align mismatch)
  WAV_UNSUPPORTED: 2, // an encoding the reader does not decode (8-bit, A-law, μ-law, ADPCM, 12-bit…)
  WAV_NO_DATA: 2, // no 'data' chunk, or no whole frame in it
  WAV_BAD_METADATA: 2, // our metadata chunk or sidecar is not valid JSON of our schema
  WAV_DISK_FULL: 2, // the disk is full
  WAV_NO_PERMISSION: 2, // no permission to read or write the file
  WAV_IO: 2, // any other operating-system error on a WAV file
  WAV_MISUSE: 2, // API misuse (append after close, wrong channel count)
} as const;

export type ErrorCode = keyof typeof ERROR_CODES;

export class FloorlineError extends Error {
  override readonly name: string = 'FloorlineError';
  readonly exitCode: number;
  constructor(
    readonly code: ErrorCode,
    message: string,
  ) {
    super(message);
    this.exitCode = ERROR_CODES[code];
  }
}

/** A mistake in how the command was called (exit 2). */
export class UsageError extends FloorlineError {
  override readonly name = 'UsageError';
  constructor(message: string) {
    super('USAGE', message);
  }
}

/** Bad input data: a file we cannot read as asked, a recording too short (exit 2). */
export class InputError extends FloorlineError {
  override readonly name = 'InputError';
  constructor(message: string) {
    super('INPUT', message);
  }
}
