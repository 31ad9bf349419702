// Trend resolutions and how long each is kept. Every level is filled straight from the Welch segments (a row is
// the mean power of the segments that end inside its interval), so a row means the same at every resolution.
import type { Level } from './schema.ts';

/** Seconds of sample time each level keeps by default (measured sizes in BENCHMARKS.md "history store"). */
export const DEFAULT_RETENTION: Record<Level, number> = {
  snap: 10 * 60,
  '1s': 3 * 3600,
  '1m': 14 * 86400,
  '1h': 400 * 86400,
};

/** Retention per level, and of the kept spectra (table spectra; default SPECTRA_RETENTION_SECONDS). */
export type Retention = Record<Level, number> & { spectra?: number };

/** Seconds kept spectra are kept by default: two days, about 24 MiB per channel a day (README "History store"). */
export const SPECTRA_RETENTION_SECONDS = 2 * 86400;

export const LEVEL_SECONDS: Record<Exclude<Level, 'snap'>, number> = { '1s': 1, '1m': 60, '1h': 3600 };

/** Interval length in samples of each level: the snapshot interval, and whole multiples of one second. */
export function levelSamples(sampleRate: number, snapshotInterval: number): Record<Level, number> {
  const second = Math.max(1, Math.round(sampleRate));
  return { snap: snapshotInterval, '1s': second, '1m': 60 * second, '1h': 3600 * second };
}

/** Parses "1s=3h,1m=14d,spectra=7d,…" (units s, m, h, d) into retention seconds per level, over the defaults. */
export function parseRetention(text: string): Retention {
  const out: Retention = { ...DEFAULT_RETENTION };
  for (const part of text
    .split(',')
    .map((p) => p.trim())
    .filter(Boolean)) {
    const m = /^(snap|1s|1m|1h|spectra)=(\d+(?:\.\d+)?)(s|m|h|d)$/.exec(part);
    if (!m)
      throw new RangeError(
        `'${part}' is not LEVEL=DURATION; write e.g. 1s=3h,1m=14d,1h=400d,spectra=7d (levels snap, 1s, 1m, 1h, spectra; units s, m, h, d)`,
      );
    out[m[1] as Level | 'spectra'] = Number(m[2]) * { s: 1, m: 60, h: 3600, d: 86400 }[m[3] as 's' | 'm' | 'h' | 'd'];
  }
  return out;
}
