// TIME arguments of the query commands and /api: ISO-8601 wall time ("2026-12-02T10:00:00Z") or t=SECONDS of
// sample time. Each run of the store maps either onto its own interval indices.

export type TimeBound = { kind: 'wall'; ms: number; text: string } | { kind: 't'; seconds: number; text: string };

/** Parses a TIME; throws RangeError naming the value and the accepted forms. */
export function parseTimeBound(text: string): TimeBound {
  const m = /^t=(-?\d+(?:\.\d+)?(?:[eE][+-]?\d+)?)$/.exec(text.trim());
  if (m) return { kind: 't', seconds: Number(m[1]), text };
  if (/^\d{4}-\d{2}-\d{2}(T[\d:.]+(Z|[+-]\d{2}:?\d{2})?)?$/.test(text.trim())) {
    const ms = Date.parse(text.trim());
    if (Number.isFinite(ms)) return { kind: 'wall', ms, text };
  }
  throw new RangeError(
    `'${text}' is not a time: give ISO-8601 wall time (e.g. 2026-12-02T10:00:00Z) or t=SECONDS of sample time (e.g. t=120)`,
  );
}

export interface RunTiming {
  sampleRate: number;
  firstSample: number;
  startWallMs: number;
}

/** Sample index of a bound within a run (fractional). */
export function boundSample(b: TimeBound, run: RunTiming): number {
  return b.kind === 't'
    ? b.seconds * run.sampleRate
    : run.firstSample + ((b.ms - run.startWallMs) / 1000) * run.sampleRate;
}

export function wallAt(run: RunTiming, sample: number): string {
  return new Date(run.startWallMs + ((sample - run.firstSample) / run.sampleRate) * 1000).toISOString();
}
