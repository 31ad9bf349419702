// The incidents of a span in one pass and bounded memory: the first MAX_INCIDENT_ROWS kept whole (the report lists
// them), the rest counted by rule and channel, and for every incident its share of two figures: the shading of the
// trend plots (merged per channel at the plots' resolution, so a week of 40 000 incidents is a few hundred
// rectangles) and the time above threshold per band (summed as it goes).
import type { IncidentView } from '../store/incident-query.ts';
import { MAX_INCIDENT_ROWS } from './incident-spectra.ts';

/** A stretch of a trend plot covered by incidents of one channel. */
export interface ShadedSpan {
  /** ms of wall time. */
  from: number;
  to: number;
  /** The first incident's id, and how many incidents the stretch covers. */
  first: string;
  count: number;
}

/** A band-rise series of the span: the time above threshold is kept for each. */
export interface BandSeriesKey {
  key: string;
  channel: string;
  band: readonly [number, number];
}

export interface IncidentDigest {
  listed: IncidentView[];
  /** Incidents past the listed ones: their number, the first one's start, counts by "rules on channel". */
  unlisted: { count: number; firstStart: string; byKind: [string, number][] } | null;
  total: number;
  shading: Map<string, ShadedSpan[]>;
  /** Seconds of sample time covered by band-rise incidents of each band series, by its key. */
  aboveSeconds: Map<string, number>;
}

/** A band-rise member's band matches a stored band within 1 % (stored edges sit on bins, alarm edges as given). */
function sameBand(m: readonly [number, number], s: readonly [number, number]): boolean {
  return Math.abs(m[0] - s[0]) < 0.01 * s[0] + 0.01 && Math.abs(m[1] - s[1]) < 0.01 * s[1];
}

export function digestIncidents(
  incidents: Iterable<IncidentView>,
  o: {
    /** Wall-time extent of the plots (ms) and their width in pixel columns: neighbours closer than a column merge. */
    x0: number;
    x1: number;
    columns: number;
    /** Where an incident still open ends: the span's end in wall time (ms) and in sample time (s). */
    openEndMs: number;
    openEndT: number;
    bands: BandSeriesKey[];
  },
): IncidentDigest {
  const listed: IncidentView[] = [];
  const byKind = new Map<string, number>();
  let firstUnlisted: string | undefined;
  let total = 0;
  const shading = new Map<string, ShadedSpan[]>();
  const aboveSeconds = new Map<string, number>(o.bands.map((b) => [b.key, 0]));
  const resolution = Math.max(1, o.x1 - o.x0) / o.columns;
  for (const i of incidents) {
    total++;
    if (listed.length < MAX_INCIDENT_ROWS) listed.push(i);
    else {
      firstUnlisted ??= i.start.wallTime;
      const kind = `${i.rules.join('+')} on ${i.channel}`;
      byKind.set(kind, (byKind.get(kind) ?? 0) + 1);
    }
    // Incidents come oldest first, so each channel's stretches grow at their end only.
    const from = Date.parse(i.start.wallTime);
    const to = i.end ? Date.parse(i.end.wallTime) : o.openEndMs;
    const spans = shading.get(i.channel) ?? [];
    shading.set(i.channel, spans);
    const last = spans.at(-1);
    if (last && from <= last.to + resolution) {
      last.to = Math.max(last.to, to);
      last.count++;
    } else spans.push({ from, to, first: i.id, count: 1 });
    for (const b of o.bands) {
      if (b.channel !== i.channel) continue;
      if (!i.members.some((m) => m.rule === 'band-rise' && m.band && sameBand(m.band, b.band))) continue;
      aboveSeconds.set(b.key, aboveSeconds.get(b.key)! + ((i.end?.t ?? o.openEndT) - i.start.t));
    }
  }
  return {
    listed,
    unlisted:
      firstUnlisted === undefined
        ? null
        : { count: total - listed.length, firstStart: firstUnlisted, byKind: [...byKind] },
    total,
    shading,
    aboveSeconds,
  };
}
