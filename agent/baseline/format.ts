// The baseline file (JSON): analysis settings and their hash, per channel the averaged density with its equivalent
// number of averages and band powers, the capture span in sample time, the settling check and free-text notes.
import { writeFile } from 'node:fs/promises';
import { firstSettingMismatch, settingsHash, type AnalysisSettings } from '../../protocol/settings.ts';
import { InputError } from '../errors.ts';
import { readSmallTextFileSync } from '../input-file.ts';

export const BASELINE_SCHEMA = 'floorline.baseline/1';
/** Largest baseline file read: 64 channels at segment 2^18 (about 28 bytes a bin) fit; V8 cannot hold a string
 * much past 512 MiB anyway. */
export const MAX_BASELINE_BYTES = 256 * 2 ** 20;

export interface BaselineBand {
  low: number;
  high: number;
  /** Band RMS, channel unit: sqrt(Σ psd·binHz) over low ≤ f ≤ high. */
  rms: number;
}

export interface BaselineChannel {
  name: string;
  unit: string;
  /** 'input': taken from a stream whose calibration divides by the front-end gain (densities at the amplifier
   *  input); absent: in the channel's own units at the converter. */
  referredTo?: 'input';
  /** Segments averaged (mean averaging over the span). */
  segments: number;
  /** Overlap-corrected equivalent number of averages (Welch 1967): sets the estimate's degrees of freedom. */
  equivalentAverages: number;
  /** One-sided density, unit²/Hz, bins k·binHz for k = 0..segment/2. */
  psd: number[];
  bands: BaselineBand[];
}

export interface SettlingBand {
  channel: string;
  low: number;
  high: number;
  /** Second half over first half band power, dB. */
  driftDb: number;
  /** Two-sided F limits at the settling check's probability, dB. */
  lowerDb: number;
  upperDb: number;
}

export interface Settling {
  settled: boolean;
  /** Probability of a false "drifting" verdict per band. */
  alpha: number;
  bands: SettlingBand[];
  /** Human-readable warnings (empty when settled). */
  warnings: string[];
}

export interface BaselineFile {
  schema: typeof BASELINE_SCHEMA;
  settings: AnalysisSettings;
  settingsHash: string;
  binHz: number;
  span: { firstSample: number; lastSample: number; seconds: number };
  source: string;
  /** Wall-clock label of the capture (not used for decisions). */
  createdWallTime: string;
  notes: string;
  channels: BaselineChannel[];
  settling: Settling;
}

export async function writeBaseline(path: string, b: BaselineFile): Promise<void> {
  await writeFile(path, JSON.stringify(b, null, 1) + '\n', 'utf8');
}

export async function readBaseline(path: string): Promise<BaselineFile> {
  let text: string;
  try {
    text = readSmallTextFileSync(path, MAX_BASELINE_BYTES);
  } catch (err) {
    throw new InputError(
      `baseline ${path}: cannot read it (${(err as NodeJS.ErrnoException).code ?? (err as Error).message}); give the path of a file made by \`floorline baseline\`.`,
    );
  }
  let value: unknown;
  try {
    value = JSON.parse(text);
  } catch (err) {
    throw new InputError(
      `baseline ${path}: not JSON (${(err as Error).message}); make a fresh one with \`floorline baseline FILE -o ${path}\`.`,
    );
  }
  return validateBaseline(value, path);
}

/** Checks the structure a detector relies on; the message names the field and the fix. */
export function validateBaseline(v: unknown, where: string): BaselineFile {
  const fail = (what: string): never => {
    throw new InputError(`baseline ${where}: ${what}; make a fresh one with \`floorline baseline\`.`);
  };
  if (typeof v !== 'object' || v === null) fail('is not a JSON object');
  const b = v as Partial<BaselineFile>;
  if (b.schema !== BASELINE_SCHEMA) fail(`schema is ${JSON.stringify(b.schema)}, expected ${BASELINE_SCHEMA}`);
  const s = b.settings;
  if (typeof s !== 'object' || s === null) fail('settings are missing');
  if (
    !s ||
    typeof s.sampleRate !== 'number' ||
    typeof s.segment !== 'number' ||
    typeof s.window !== 'string' ||
    typeof s.overlap !== 'number' ||
    typeof s.detrend !== 'string'
  )
    fail('settings are incomplete');
  if (b.settingsHash !== settingsHash(s!))
    fail(`settingsHash ${b.settingsHash} does not match its settings (${settingsHash(s!)}): the file was edited`);
  if (!Array.isArray(b.channels) || b.channels.length === 0) fail('has no channels');
  const bins = s!.segment / 2 + 1;
  for (const c of b.channels!) {
    if (typeof c !== 'object' || c === null || Array.isArray(c)) fail('a channel entry is not an object');
    if (typeof c.name !== 'string') fail('a channel has no name');
    if (!Array.isArray(c.psd) || c.psd.length !== bins)
      fail(`channel ${c.name} has ${c.psd?.length} density bins, settings need ${bins}`);
    if (!c.psd.every((x) => typeof x === 'number' && Number.isFinite(x) && x >= 0))
      fail(`channel ${c.name} density holds a value that is not a finite number ≥ 0`);
    if (!(
      typeof c.equivalentAverages === 'number' &&
      c.equivalentAverages > 0 &&
      Number.isFinite(c.equivalentAverages)
    ))
      fail(`channel ${c.name} equivalentAverages must be > 0`);
  }
  if (typeof b.span !== 'object' || b.span === null || typeof b.span.firstSample !== 'number') fail('span is missing');
  return b as BaselineFile;
}

/**
 * Refuses a comparison between a baseline and a live stream whose settings or channels differ, naming the first
 * difference (a density from another segment, window, overlap, detrend or rate is not comparable bin by bin).
 */
export function checkBaselineMatches(
  b: BaselineFile,
  live: AnalysisSettings,
  channels: readonly string[],
  where: string,
): void {
  const diff = firstSettingMismatch(b.settings, live);
  if (diff) {
    throw new InputError(
      `baseline ${where} was taken with other analysis settings: ${diff} (baseline vs live). ` +
        "Run with the baseline's settings or capture a new baseline with the live ones.",
    );
  }
  for (const name of channels) {
    if (!b.channels.some((c) => c.name === name)) {
      throw new InputError(
        `baseline ${where} has no channel ${name} (it has ${b.channels.map((c) => c.name).join(', ')}); capture a baseline on this rig's channels.`,
      );
    }
  }
}
