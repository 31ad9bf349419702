// Stated limits of what floorline accepts from a board, a file or a client. Each is checked where the input
// arrives, before anything is allocated for it, with an error that names the input and the limit.
// Why these numbers: they cover every rig floorline is for (audio-band and slower DAQ, a few dozen channels)
// with room to spare, while keeping the worst case a hostile input can cost within memory a small machine has.

/** Channels of one stream (board descriptor, WAV header, recording metadata). 64 × 1 M-bin spectra fit in memory. */
export const MAX_CHANNELS = 64;
/** Longest channel name or unit (they label charts, metrics series and log lines). */
export const MAX_NAME_LENGTH = 64;
/** Sample rate range, Hz: from slow sensor logging (one sample in 1000 s) to fast DAQ boards. */
export const SAMPLE_RATE_MIN = 0.001;
export const SAMPLE_RATE_MAX = 10_000_000;
/** Largest metadata sidecar or embedded metadata chunk, bytes (a real one is a few kB). */
export const MAX_METADATA_BYTES = 1 << 20;
/** Largest first sample index: 2^48 keeps every later index an exact integer for 89 years at 100 kS/s. */
export const MAX_FIRST_SAMPLE = 2 ** 48;
/** Wall-time labels must lie in years 1970…9999, so sample-time offsets never leave the Date range. */
export const WALL_TIME_MIN_MS = 0;
export const WALL_TIME_MAX_MS = Date.UTC(9999, 11, 31, 23, 59, 59);

/** Null when the rate is inside the stated range, else the reason (for messages that name the input). */
export function rateProblem(rate: number): string | null {
  if (!(rate >= SAMPLE_RATE_MIN && rate <= SAMPLE_RATE_MAX))
    return `sample rate ${rate} Hz is outside ${SAMPLE_RATE_MIN}…${SAMPLE_RATE_MAX} Hz`;
  return null;
}

/** True when text holds a control character (C0, DEL, C1): names from outside must not. */
export function hasControlCharacters(text: string): boolean {
  // eslint-disable-next-line no-control-regex
  return /[\u0000-\u001f\u007f-\u009f]/.test(text);
}

/** Strips terminal control sequences and control characters from text that will be printed or logged: names in
 * descriptors and files come from outside and must not move the cursor, retitle the terminal or hide lines. */
export function printable(text: string): string {
  // eslint-disable-next-line no-control-regex
  return text.replace(
    /\u001b\[[0-?]*[ -/]*[@-~]|\u001b\][^\u0007\u001b]*(?:\u0007|\u001b\\)?|[\u0000-\u0008\u000b-\u001f\u007f-\u009f]/g,
    '\uFFFD',
  );
}
