// Our recording metadata: the same JSON travels in the sidecar NAME.wav.json and in an embedded 'flmd' chunk.
// When both exist the sidecar wins (it is the copy a user may edit); the chunk keeps a lone WAV self-describing.
import type { AnalysisSettings } from '../../protocol/settings.ts';
import type { ChannelCalibration, SourceKind } from '../../protocol/stream.ts';
import { WavError } from './errors.ts';
import {
  MAX_CHANNELS,
  MAX_NAME_LENGTH,
  hasControlCharacters,
  printable,
  MAX_FIRST_SAMPLE,
  WALL_TIME_MAX_MS,
  WALL_TIME_MIN_MS,
  rateProblem,
} from '../../protocol/limits.ts';

/** Chunk id of the embedded metadata (our own naming: "floorline metadata"). */
export const METADATA_CHUNK_ID = 'flmd';
export const METADATA_SCHEMA = 'floorline.recording/1';

export interface ChannelMetadata {
  name: string;
  /** Unit of the stored samples, e.g. "V" for our recordings, "FS" for unscaled full-scale fractions. */
  unit: string;
  /** Calibration the recorder applied: unit per raw count (informational; the samples are already in `unit`). */
  scale?: number;
  /** Front-end gain ahead of the ADC, V/V (informational). */
  gain?: number;
  /** Full scale in raw counts of the board, for clip detection on replay. */
  fullScaleCounts?: number;
  /** Noise budget at the amplifier input: source resistance (Ω) and temperature (K), amplifier densities. */
  budget?: { sourceOhms: number; kelvin: number; amplifierDensity: number; amplifierCurrent: number };
  /** The rig config's calibration the samples already carry (a replay applies nothing twice). */
  calibration?: ChannelCalibration;
}

export interface RecordingMetadata {
  schema: typeof METADATA_SCHEMA;
  sampleRate: number;
  channels: ChannelMetadata[];
  source?: { kind: SourceKind | 'file'; label: string };
  boardId?: string;
  /** Sample index of the first frame in this file (rotated recordings continue the count). */
  firstSample: number;
  /** ISO-8601 UTC wall time at firstSample (label only). */
  startWallTime?: string;
  analysis?: Partial<AnalysisSettings>;
  notes?: string;
}

export function sidecarPath(wavPath: string): string {
  return `${wavPath}.json`;
}

function fail(where: string, what: string): never {
  throw new WavError('WAV_BAD_METADATA', printable(`${where}: ${what}; fix or delete it.`));
}

/** Validates parsed JSON as RecordingMetadata. `where` names the sidecar or chunk in errors. */
export function validateMetadata(value: unknown, where: string): RecordingMetadata {
  if (typeof value !== 'object' || value === null || Array.isArray(value)) fail(where, 'metadata is not a JSON object');
  const m = value as Record<string, unknown>;
  if (m.schema !== METADATA_SCHEMA)
    fail(where, `"schema" is ${JSON.stringify(m.schema)}, expected "${METADATA_SCHEMA}"`);
  if (typeof m.sampleRate !== 'number' || !(m.sampleRate > 0)) fail(where, '"sampleRate" must be a positive number');
  const rate = rateProblem(m.sampleRate);
  if (rate) fail(where, `"sampleRate": ${rate}`);
  if (!Array.isArray(m.channels) || m.channels.length === 0) fail(where, '"channels" must be a non-empty array');
  if (m.channels.length > MAX_CHANNELS)
    fail(where, `"channels" lists ${m.channels.length}; at most ${MAX_CHANNELS} are supported`);
  m.channels.forEach((c: unknown, i: number) => {
    const ch = c as Record<string, unknown>;
    if (typeof ch !== 'object' || ch === null) fail(where, `channels[${i}] is not an object`);
    if (typeof ch.name !== 'string' || ch.name === '') fail(where, `channels[${i}].name must be a non-empty string`);
    if (typeof ch.unit !== 'string' || ch.unit === '') fail(where, `channels[${i}].unit must be a non-empty string`);
    for (const k of ['name', 'unit'] as const) {
      const text = ch[k] as string;
      if (text.length > MAX_NAME_LENGTH || hasControlCharacters(text))
        fail(where, `channels[${i}].${k} must be at most ${MAX_NAME_LENGTH} printable characters`);
    }
    for (const k of ['scale', 'gain', 'fullScaleCounts']) {
      if (ch[k] !== undefined && (typeof ch[k] !== 'number' || !Number.isFinite(ch[k] as number))) {
        fail(where, `channels[${i}].${k} must be a finite number`);
      }
      if (ch[k] !== undefined && k !== 'gain' && !((ch[k] as number) > 0))
        fail(where, `channels[${i}].${k} must be above 0, got ${ch[k]}`);
    }
    if (ch.budget !== undefined) {
      const b = ch.budget as Record<string, unknown>;
      if (typeof b !== 'object' || b === null) fail(where, `channels[${i}].budget must be an object`);
      for (const k of ['sourceOhms', 'kelvin', 'amplifierDensity', 'amplifierCurrent']) {
        if (typeof b[k] !== 'number' || !Number.isFinite(b[k] as number) || (b[k] as number) < 0) {
          fail(where, `channels[${i}].budget.${k} must be a number ≥ 0`);
        }
      }
    }
    const cal = ch.calibration as Record<string, unknown> | undefined;
    if (
      cal !== undefined &&
      (typeof cal !== 'object' ||
        cal === null ||
        typeof cal.unit !== 'string' ||
        typeof cal.inputReferred !== 'boolean')
    ) {
      fail(where, `channels[${i}].calibration must be an object with "unit" and "inputReferred"`);
    }
  });
  if (
    typeof m.firstSample !== 'number' ||
    !Number.isSafeInteger(m.firstSample) ||
    m.firstSample < 0 ||
    m.firstSample > MAX_FIRST_SAMPLE
  ) {
    fail(where, `"firstSample" must be an integer from 0 to 2^48`);
  }
  if (m.startWallTime !== undefined) {
    const ms = typeof m.startWallTime === 'string' ? Date.parse(m.startWallTime) : NaN;
    if (!(ms >= WALL_TIME_MIN_MS && ms <= WALL_TIME_MAX_MS))
      fail(where, '"startWallTime" must be an ISO-8601 time in years 1970…9999');
  }
  return m as unknown as RecordingMetadata;
}

/** Parses metadata JSON text (trailing spaces or NULs of a reserved chunk are allowed). */
export function parseMetadataText(text: string, where: string): RecordingMetadata {
  let value: unknown;
  try {
    value = JSON.parse(text.replace(/[\0 ]+$/, ''));
  } catch (err) {
    fail(where, `metadata is not valid JSON (${(err as Error).message})`);
  }
  return validateMetadata(value, where);
}
