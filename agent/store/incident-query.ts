// Incidents as stored, with their notes, for `floorline incidents` and /api/incidents.
import type { StoreDb } from './open-store.ts';
import type { IncidentMember, IncidentRecord } from './incident-book.ts';
import type { TimeBound } from './time-bound.ts';
import { unitName } from './trend-format.ts';

/** An incident as the store keeps it, with its notes. */
export interface IncidentView extends IncidentRecord {
  notes: { text: string; t: number | null; wallTime: string }[];
}

interface Row {
  id: string;
  channel: string;
  rules: string;
  members: string;
  start_sample: number;
  start_t: number;
  start_wall: string;
  end_sample: number | null;
  end_t: number | null;
  end_wall: string | null;
  settled: string | null;
  peak: string;
  acknowledged: number;
  capture: string | null;
}

type IncidentNotes = IncidentView['notes'];

/** Every incident's notes by incident id (notes are typed by people: few), read before iterating the incidents,
 *  since better-sqlite3 allows no other statement on the connection while an iteration is open. */
function notesByIncident(db: StoreDb): Map<string, IncidentNotes> {
  const out = new Map<string, IncidentNotes>();
  const rows = db
    .prepare('SELECT incident, text, t, wall_time FROM notes WHERE incident IS NOT NULL ORDER BY id')
    .iterate() as IterableIterator<{ incident: string; text: string; t: number | null; wall_time: string }>;
  for (const n of rows) {
    const list = out.get(n.incident) ?? [];
    list.push({ text: n.text, t: n.t, wallTime: n.wall_time });
    out.set(n.incident, list);
  }
  return out;
}

/** Incidents that overlap [from, to) (wall time, or sample time t), oldest first, one at a time: a span of months
 *  holds tens of thousands, so callers that only count or summarise never hold them all. */
export function* iterateIncidents(db: StoreDb, from?: TimeBound, to?: TimeBound): Generator<IncidentView> {
  const notes = notesByIncident(db);
  const startOf = (r: Row, b: TimeBound) => (b.kind === 'wall' ? Date.parse(r.start_wall) : r.start_t);
  const endOf = (r: Row, b: TimeBound) =>
    b.kind === 'wall' ? (r.end_wall ? Date.parse(r.end_wall) : Infinity) : (r.end_t ?? Infinity);
  const value = (b: TimeBound) => (b.kind === 'wall' ? b.ms : b.seconds);
  const rows = db.prepare('SELECT * FROM incidents ORDER BY start_wall, id').iterate() as IterableIterator<Row>;
  for (const r of rows) {
    if ((to && startOf(r, to) >= value(to)) || (from && endOf(r, from) < value(from))) continue;
    yield {
      id: r.id,
      channel: r.channel,
      rules: JSON.parse(r.rules) as string[],
      members: JSON.parse(r.members) as IncidentMember[],
      start: { sample: r.start_sample, t: r.start_t, wallTime: r.start_wall },
      end: r.end_sample === null ? null : { sample: r.end_sample, t: r.end_t!, wallTime: r.end_wall! },
      settled: r.settled ? JSON.parse(r.settled) : null,
      peak: JSON.parse(r.peak),
      acknowledged: r.acknowledged === 1,
      notes: notes.get(r.id) ?? [],
      capture: r.capture,
    };
  }
}

/** Incidents that overlap [from, to) (wall time, or sample time t), oldest first. */
export function queryIncidents(db: StoreDb, from?: TimeBound, to?: TimeBound): IncidentView[] {
  return [...iterateIncidents(db, from, to)];
}

/** Each channel's unit, from its band series (the unit its line amplitudes are in). */
export function channelUnits(db: StoreDb): Map<string, string> {
  const rows = db.prepare("SELECT DISTINCT channel, unit FROM series WHERE quantity = 'bandRms'").all() as {
    channel: string;
    unit: string;
  }[];
  return new Map(rows.map((r) => [r.channel, r.unit]));
}

/**
 * One line per incident (RFC 4180 quoting for text). Amplitudes are RMS in the channel's unit, given per row in
 * `unit` and, when every listed channel has the same one, in the amplitude columns' names too.
 */
export function incidentsCsv(list: IncidentView[], units: ReadonlyMap<string, string>): string {
  const q = (s: string) => (/[",\r\n]/.test(s) ? `"${s.replace(/"/g, '""')}"` : s);
  const n = (v: number | null | undefined) => (v === null || v === undefined ? 'nan' : String(v));
  const used = [...new Set(list.map((i) => units.get(i.channel)).filter((u): u is string => u !== undefined))];
  const amp = used.length === 1 ? `amplitude_${unitName(used[0])}_rms` : 'amplitude_rms';
  const lines = [
    `id,channel,unit,rules,start_t_s,start_sample,start_wall,end_t_s,end_sample,end_wall,settled_level_dB,settled_${amp},peak_level_dB,peak_${amp},peak_sample,acknowledged,notes,capture`,
  ];
  for (const i of list) {
    lines.push(
      [
        q(i.id),
        q(i.channel),
        q(units.get(i.channel) ?? ''),
        q(i.rules.join(' ')),
        i.start.t,
        i.start.sample,
        i.start.wallTime,
        n(i.end?.t),
        n(i.end?.sample),
        i.end?.wallTime ?? '',
        n(i.settled?.levelDb),
        n(i.settled?.amplitude),
        n(i.peak?.levelDb),
        n(i.peak?.amplitude),
        n(i.peak?.sample),
        i.acknowledged ? 1 : 0,
        q(i.notes.map((x) => x.text).join(' | ')),
        q(i.capture ?? ''),
      ].join(','),
    );
  }
  return lines.join('\n') + '\n';
}
