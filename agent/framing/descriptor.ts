// The descriptor message: what a board tells the host about its stream. Sent by the board right after it
// starts streaming and whenever the host sends a describe request. Body is UTF-8 JSON (see PROTOCOL.md).
import { MAX_CHANNELS, SAMPLE_FORMATS, formatFullScale, type SampleFormat } from './protocol.ts';
import {
  MAX_NAME_LENGTH,
  SAMPLE_RATE_MAX,
  SAMPLE_RATE_MIN,
  hasControlCharacters,
  printable,
  rateProblem,
} from '../../protocol/limits.ts';

/** Largest unit per count: an int32 full scale times this stays well inside float32. */
export const PER_COUNT_MAX = 1e20;

export interface DescriptorChannel {
  name: string;
  /** Unit after calibration, e.g. "V". */
  unit: string;
  /** Calibration: unit per count. */
  perCount: number;
  /** Full scale in counts (peak magnitude), at most the format's limit. */
  fullScale: number;
}

export interface BoardDescriptor {
  /** Sample instants per second, per channel. */
  rate: number;
  format: SampleFormat;
  board: string;
  firmware: string;
  /** Changes at every power-up or reset: a new value means the sequence counter restarted from 0. */
  boot: string;
  /** The board's sample counter (sequence of the next sample frame, mod 2^32) when the descriptor was sent. */
  clock: number;
  channels: DescriptorChannel[];
}

export class DescriptorError extends Error {
  override readonly name = 'DescriptorError';
}

function need(cond: boolean, what: string): void {
  if (!cond) throw new DescriptorError(`board descriptor: ${what}`);
}

/** Validates a parsed descriptor body; throws DescriptorError naming the field. */
export function validateDescriptor(value: unknown): BoardDescriptor {
  need(typeof value === 'object' && value !== null && !Array.isArray(value), 'body is not a JSON object');
  const d = value as Record<string, unknown>;
  need(
    typeof d.rate === 'number' && rateProblem(d.rate) === null,
    `"rate" must be a number of Hz in ${SAMPLE_RATE_MIN}…${SAMPLE_RATE_MAX}`,
  );
  need(SAMPLE_FORMATS.includes(d.format as SampleFormat), `"format" must be one of ${SAMPLE_FORMATS.join(', ')}`);
  for (const k of ['board', 'firmware', 'boot'])
    need(
      typeof d[k] === 'string' && !hasControlCharacters(d[k] as string) && (d[k] as string).length <= 256,
      `"${k}" must be a string of at most 256 printable characters`,
    );
  need(
    typeof d.clock === 'number' && Number.isInteger(d.clock) && d.clock >= 0 && d.clock <= 0xffffffff,
    '"clock" must be an integer 0..2^32-1',
  );
  need(
    Array.isArray(d.channels) && d.channels.length >= 1 && d.channels.length <= MAX_CHANNELS,
    `"channels" must list 1..${MAX_CHANNELS} channels`,
  );
  const limit = formatFullScale(d.format as SampleFormat);
  (d.channels as unknown[]).forEach((c, i) => {
    const ch = c as Record<string, unknown>;
    need(typeof ch === 'object' && ch !== null, `channels[${i}] is not an object`);
    need(typeof ch.name === 'string' && ch.name !== '', `channels[${i}].name must be a non-empty string`);
    need(typeof ch.unit === 'string' && ch.unit !== '', `channels[${i}].unit must be a non-empty string`);
    for (const k of ['name', 'unit']) {
      const text = ch[k] as string;
      need(
        text.length <= MAX_NAME_LENGTH && !hasControlCharacters(text),
        `channels[${i}].${k} must be at most ${MAX_NAME_LENGTH} printable characters`,
      );
    }
    // A full-scale count times perCount must stay a float32 number: beyond it every sample would be a fault.
    need(
      typeof ch.perCount === 'number' && ch.perCount > 0 && ch.perCount <= PER_COUNT_MAX,
      `channels[${i}].perCount must be a positive number ≤ ${PER_COUNT_MAX}`,
    );
    need(
      typeof ch.fullScale === 'number' && ch.fullScale > 0 && ch.fullScale <= limit,
      `channels[${i}].fullScale must be in (0, ${limit}]`,
    );
  });
  return d as unknown as BoardDescriptor;
}

const encoder = new TextEncoder();
const decoder = new TextDecoder('utf-8', { fatal: true });

export function descriptorToBytes(d: BoardDescriptor): Uint8Array {
  const body = encoder.encode(JSON.stringify(validateDescriptor(d)));
  return body;
}

/** Parses a descriptor body (bytes[start..end)); throws DescriptorError on bad UTF-8, JSON or fields. */
export function descriptorFromBytes(bytes: Uint8Array, start: number, end: number): BoardDescriptor {
  let value: unknown;
  try {
    value = JSON.parse(decoder.decode(bytes.subarray(start, end)));
  } catch (err) {
    throw new DescriptorError(printable(`board descriptor: body is not UTF-8 JSON (${(err as Error).message})`));
  }
  return validateDescriptor(value);
}
