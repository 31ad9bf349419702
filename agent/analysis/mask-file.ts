// Limit-mask CSV: a header row `frequency,limit` or `frequency,limit,unit`, then one point a row (Hz, density);
// blank lines and lines starting with '#' are skipped. The unit column, when present, is a density unit with an
// optional SI prefix ("V/√Hz", "nV/√Hz", "uV/rtHz"); without it the limit is in the analysed channel's unit/√Hz.
// Refused, naming the line: non-numeric fields, frequencies that do not strictly increase, limits ≤ 0 (log-log
// needs positive values), frequencies ≤ 0 or beyond the file's Nyquist frequency, mixed units.
import type { LimitMask } from '../../dsp/measure/limit-mask.ts';
import { AnalysisInputError } from './input-error.ts';
import { readSmallTextFileSync } from '../input-file.ts';

/** Largest mask file read (a point a line: far more points than any spectrum has bins). */
const MAX_MASK_BYTES = 16 * 2 ** 20;

export interface MaskFile extends LimitMask {
  path: string;
  /** Base unit of the limit (e.g. "V"), or undefined when the file has no unit column. */
  unit?: string;
}

const PREFIX: Record<string, number> = { '': 1, m: 1e-3, u: 1e-6, µ: 1e-6, μ: 1e-6, n: 1e-9, p: 1e-12, f: 1e-15 };

/** "nV/√Hz" → { base: "V", factor: 1e-9 }; undefined when not a density unit. */
export function parseDensityUnit(text: string): { base: string; factor: number } | undefined {
  const m = /^\s*([muµμnpf]?)([A-Za-zΩ]+)\s*\/\s*(?:√|sqrt\(?|rt)\s*Hz\)?\s*$/.exec(text);
  if (!m) return undefined;
  // A lone prefix letter that is itself a unit (e.g. "m" for metres) reads as the unit, not a prefix.
  if (m[1] !== '' && m[2] === '') return undefined;
  return { base: m[2], factor: PREFIX[m[1]] };
}

function bad(path: string, line: number, what: string): never {
  throw new AnalysisInputError(`--mask ${path}, line ${line}: ${what}`);
}

export function parseMaskCsv(text: string, path: string, nyquist: number): MaskFile {
  const rows = text.split(/\r?\n/);
  let header: string[] | undefined;
  const f: number[] = [];
  const l: number[] = [];
  let unit: string | undefined;
  for (let i = 0; i < rows.length; i++) {
    const line = i + 1;
    const raw = rows[i].replace(/^\uFEFF/, '').trim();
    if (raw === '' || raw.startsWith('#')) continue;
    const cells = raw.split(',').map((c) => c.trim());
    if (!header) {
      const names = cells.map((c) => c.toLowerCase());
      if (
        names[0] !== 'frequency' ||
        names[1] !== 'limit' ||
        (names.length === 3 && names[2] !== 'unit') ||
        names.length > 3
      ) {
        bad(path, line, `the header must be 'frequency,limit' or 'frequency,limit,unit', found '${raw}'.`);
      }
      header = names;
      continue;
    }
    if (cells.length !== header.length)
      bad(path, line, `expected ${header.length} fields (${header.join(',')}), found ${cells.length}.`);
    const freq = cells[0] === '' ? NaN : Number(cells[0]);
    let limit = cells[1] === '' ? NaN : Number(cells[1]);
    if (!Number.isFinite(freq)) bad(path, line, `frequency '${cells[0]}' is not a number in Hz.`);
    if (!Number.isFinite(limit)) bad(path, line, `limit '${cells[1]}' is not a number.`);
    if (freq <= 0) bad(path, line, `frequency ${freq} Hz must be > 0 (the mask is interpolated on log-log axes).`);
    if (freq > nyquist)
      bad(
        path,
        line,
        `frequency ${freq} Hz is beyond the Nyquist frequency ${nyquist} Hz of the recording; end the mask at or below it.`,
      );
    if (limit < 0) bad(path, line, `limit ${limit} is negative; a density limit must be > 0.`);
    if (limit === 0) bad(path, line, `limit 0 cannot be drawn on log-log axes; give a positive limit.`);
    if (f.length > 0 && !(freq > f[f.length - 1])) {
      bad(
        path,
        line,
        `frequency ${freq} Hz does not increase (previous row ${f[f.length - 1]} Hz); list the points in strictly increasing frequency.`,
      );
    }
    if (header.length === 3) {
      const u = parseDensityUnit(cells[2]);
      if (!u) bad(path, line, `unit '${cells[2]}' is not a density unit; write e.g. V/√Hz, nV/√Hz or uV/rtHz.`);
      if (unit !== undefined && u.base !== unit)
        bad(path, line, `unit ${u.base}/√Hz differs from the earlier rows' ${unit}/√Hz; use one unit.`);
      unit = u.base;
      limit *= u.factor;
    }
    f.push(freq);
    l.push(limit);
  }
  if (!header)
    throw new AnalysisInputError(
      `--mask ${path}: the file is empty; write a header 'frequency,limit[,unit]' and at least one point.`,
    );
  if (f.length === 0)
    throw new AnalysisInputError(`--mask ${path}: no points after the header; add rows 'frequency,limit'.`);
  return { path, frequency: Float64Array.from(f), limit: Float64Array.from(l), unit };
}

export function readMaskFile(path: string, nyquist: number): MaskFile {
  let text: string;
  try {
    text = readSmallTextFileSync(path, MAX_MASK_BYTES);
  } catch (err) {
    throw new AnalysisInputError(
      `--mask ${path}: cannot read it (${(err as NodeJS.ErrnoException).code ?? (err as Error).message}); give the path of a CSV mask.`,
    );
  }
  return parseMaskCsv(text, path, nyquist);
}
