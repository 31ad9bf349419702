// Plain text mode for simple boards: one line per sample instant, numbers separated by commas, spaces or tabs
// (any mix, runs count once), "\n" or "\r\n" line ends. Lines starting with '#' are comments. A first line of
// names (any token not a number) names the channels. The first data line fixes the channel count; a later line
// with another count or a token that is not a number is counted as malformed and skipped, never guessed at.
// Text has no sequence counter, so samples lost on the wire cannot be counted (see PROTOCOL.md).

export const MAX_LINE = 4096;
export const MAX_TEXT_CHANNELS = 64;

export interface TextHandler {
  /** Channel names from a header line (called at most once, before any row). */
  names?(names: string[]): void;
  /** One sample instant: values[0..channels). The array is reused. */
  row(values: Float64Array, channels: number): void;
}

export interface TextCounters {
  bytes: number;
  rows: number;
  /** Lines with a wrong number of values or a token that is not a number. */
  malformed: number;
  /** Lines longer than MAX_LINE bytes (skipped up to their newline). */
  overlong: number;
}

const SEPARATOR = /[,\t ]+/;
const NUMBER = /^[+-]?(\d+\.?\d*|\.\d+)([eE][+-]?\d+)?$/;

export class TextLineDecoder {
  readonly counters: TextCounters = { bytes: 0, rows: 0, malformed: 0, overlong: 0 };
  private readonly line = new Uint8Array(MAX_LINE);
  private length = 0;
  private skipping = false;
  private channels = 0;
  private sawHeaderOrData = false;
  private readonly values = new Float64Array(MAX_TEXT_CHANNELS);

  constructor(
    private readonly handler: TextHandler,
    channels = 0,
  ) {
    if (!Number.isInteger(channels) || channels < 0 || channels > MAX_TEXT_CHANNELS) {
      throw new RangeError(
        `text decoder: channels must be 0 (from the first line) to ${MAX_TEXT_CHANNELS}, got ${channels}`,
      );
    }
    this.channels = channels;
  }

  /** Channel count (0 until the first data line when not given). */
  get channelCount(): number {
    return this.channels;
  }

  push(bytes: Uint8Array, start = 0, end = bytes.length): void {
    this.counters.bytes += end - start;
    let from = start;
    for (let i = start; i < end; i++) {
      if (bytes[i] !== 0x0a) continue;
      this.append(bytes, from, i);
      if (!this.skipping) this.finishLine();
      this.length = 0;
      this.skipping = false;
      from = i + 1;
    }
    this.append(bytes, from, end);
  }

  private append(bytes: Uint8Array, from: number, to: number): void {
    if (this.skipping || to <= from) return;
    if (this.length + (to - from) > MAX_LINE) {
      this.counters.overlong++;
      this.skipping = true;
      this.length = 0;
      return;
    }
    this.line.set(bytes.subarray(from, to), this.length);
    this.length += to - from;
  }

  private finishLine(): void {
    let n = this.length;
    if (n > 0 && this.line[n - 1] === 0x0d) n--;
    const text = latin1(this.line, n).trim();
    if (text === '' || text.startsWith('#')) return;
    const tokens = text.split(SEPARATOR);
    let numeric = true;
    for (const t of tokens) if (!NUMBER.test(t)) numeric = false;
    if (!numeric) {
      if (
        !this.sawHeaderOrData &&
        tokens.length <= MAX_TEXT_CHANNELS &&
        (this.channels === 0 || tokens.length === this.channels)
      ) {
        this.sawHeaderOrData = true;
        this.channels = tokens.length;
        this.handler.names?.(tokens);
      } else {
        this.counters.malformed++;
      }
      return;
    }
    if (this.channels === 0) {
      if (tokens.length > MAX_TEXT_CHANNELS) {
        this.counters.malformed++;
        return;
      }
      this.channels = tokens.length;
    }
    this.sawHeaderOrData = true;
    if (tokens.length !== this.channels) {
      this.counters.malformed++;
      return;
    }
    const v = this.values;
    for (let i = 0; i < tokens.length; i++) v[i] = Number(tokens[i]);
    this.counters.rows++;
    this.handler.row(v, this.channels);
  }
}

function latin1(bytes: Uint8Array, n: number): string {
  let s = '';
  for (let i = 0; i < n; i++) s += String.fromCharCode(bytes[i]);
  return s;
}
