// --from/--to for offline analysis: seconds of sample time (t = sample / sampleRate, the absolute sample index the
// live run stamped) or ISO-8601 wall time when the recording's metadata gives the wall time of its first sample.
// The span is [from, to) in frames of the file; both ends are rounded to the nearest sample.
import { AnalysisInputError } from './input-error.ts';

export interface FrameSpan {
  /** First frame (0-based within the file) and one past the last. */
  start: number;
  end: number;
}

export interface SpanFile {
  path: string;
  sampleRate: number;
  frames: number;
  firstSample: number;
  startWallTime?: string;
}

const ISO = /^\d{4}-\d{2}-\d{2}T/;

/** Absolute sample index of a --from/--to value. */
function sampleOf(flag: string, text: string, file: SpanFile): number {
  if (ISO.test(text)) {
    const at = Date.parse(text);
    if (Number.isNaN(at))
      throw new AnalysisInputError(
        `--${flag} ${text}: not a valid ISO-8601 time; write e.g. 2026-12-02T10:15:00Z or seconds of sample time.`,
      );
    if (file.startWallTime === undefined) {
      throw new AnalysisInputError(
        `--${flag} ${text}: ${file.path} has no start wall time in its metadata; give seconds of sample time instead (e.g. --${flag} 12.5).`,
      );
    }
    return file.firstSample + Math.round(((at - Date.parse(file.startWallTime)) / 1000) * file.sampleRate);
  }
  const seconds = text.trim() === '' ? NaN : Number(text);
  if (!Number.isFinite(seconds) || seconds < 0) {
    throw new AnalysisInputError(
      `--${flag} '${text}' is neither seconds of sample time (≥ 0) nor an ISO-8601 time; write e.g. --${flag} 12.5.`,
    );
  }
  return Math.round(seconds * file.sampleRate);
}

/** The frames of `file` selected by from/to (undefined = file start/end). Refuses an empty or outside span. */
export function frameSpan(file: SpanFile, from: string | undefined, to: string | undefined): FrameSpan {
  const first = file.firstSample;
  const fileEnd = first + file.frames;
  const describe = `${file.path} holds t = ${(first / file.sampleRate).toFixed(3)}–${(fileEnd / file.sampleRate).toFixed(3)} s (samples ${first}–${fileEnd - 1})`;
  const a = from === undefined ? first : sampleOf('from', from, file);
  const b = to === undefined ? fileEnd : sampleOf('to', to, file);
  if (a < first || a >= fileEnd) throw new AnalysisInputError(`--from ${from}: outside the recording; ${describe}.`);
  if (b <= first || b > fileEnd) throw new AnalysisInputError(`--to ${to}: outside the recording; ${describe}.`);
  if (b <= a)
    throw new AnalysisInputError(
      `--from ${from ?? 'start'} --to ${to ?? 'end'}: the span is empty; give --to after --from.`,
    );
  return { start: a - first, end: b - first };
}
