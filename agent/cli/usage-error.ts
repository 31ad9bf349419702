/** A mistake in how the command was called: printed without a stack trace, exit code 2. */
export class UsageError extends Error {
  override readonly name = 'UsageError';
  readonly exitCode = 2;
}

/** Bad input data (a file we cannot read, a recording too short): exit code 2, message names the thing and the fix. */
export class InputError extends Error {
  override readonly name = 'InputError';
  readonly exitCode = 2;
}
