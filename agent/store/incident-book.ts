// Incidents built from the alarm events: an event carrying `incident` joins that incident; an event without one
// (from a detector that does not group) makes its own incident from raise to clear, matched by rule, channel, band
// and line. The record follows the event fields: settled levels from `settled`, peak over the life from every
// level seen and from the cleared event's peak fields, the end when every member has cleared.

export interface IncidentMember {
  rule: string;
  band?: [number, number];
  frequency?: number;
  harmonic?: number;
}

export interface StampedPoint {
  sample: number;
  t: number;
  wallTime: string;
}

export interface IncidentRecord {
  id: string;
  channel: string;
  rules: string[];
  members: IncidentMember[];
  start: StampedPoint;
  end: StampedPoint | null;
  settled: { levelDb: number; amplitude?: number; frequency?: number } | null;
  /** Highest level over the incident's life; null while none was measured (clip, gap, link). */
  peak: { levelDb: number; amplitude?: number; sample: number } | null;
  acknowledged: boolean;
  capture: string | null;
}

export interface AlarmEventLike {
  kind: string;
  rule?: string;
  state?: string;
  channel?: string;
  sample: number;
  t: number;
  wallTime: string;
  band?: [number, number];
  levelDb?: number;
  frequency?: number;
  amplitude?: number;
  harmonic?: number;
  capture?: string;
  incident?: string;
  peakLevelDb?: number;
  peakAmplitude?: number;
  peakSample?: number;
  acknowledged?: boolean;
}

/** A line's identity across its raise and clear: frequency to within 1 Hz, or the mains harmonic number. */
function memberKey(e: AlarmEventLike): string {
  const band = e.band ? `${e.band[0]}:${e.band[1]}` : '';
  const line =
    e.harmonic !== undefined ? `h${e.harmonic}` : e.frequency !== undefined ? `f${Math.round(e.frequency)}` : '';
  return `${e.rule}|${e.channel}|${band}|${line}`;
}

/** Closed incidents remembered (for a late event of theirs); older ones are forgotten, the store keeps them. */
const CLOSED_KEPT = 200;

export class IncidentBook {
  private readonly closed: string[] = [];
  private readonly incidents = new Map<
    string,
    Omit<IncidentRecord, 'peak'> & { peak: { levelDb: number; amplitude?: number; sample: number }; open: Set<string> }
  >();
  /** Open member key → incident id, for events that carry no incident id. */
  private readonly openByMember = new Map<string, string>();

  /** Applies an alarm event; returns the incident it changed (undefined for events that are not alarms). */
  apply(e: AlarmEventLike): IncidentRecord | undefined {
    // An operator's acknowledge is an info event naming its incident.
    if (e.kind === 'info' && e.state === 'acknowledged' && e.incident) {
      const acked = this.incidents.get(e.incident);
      if (!acked) return undefined;
      acked.acknowledged = true;
      return this.view(acked);
    }
    if (e.kind !== 'alarm' || !e.rule || !e.state) return undefined;
    const key = memberKey(e);
    let id = e.incident ?? this.openByMember.get(key);
    if (id === undefined && e.state !== 'raised') return undefined; // its raise is older than this store
    id ??= `${e.rule}-${e.channel ?? 'stream'}-${e.sample}`;
    let inc = this.incidents.get(id);
    if (!inc) {
      inc = {
        id,
        channel: e.channel ?? '*',
        rules: [],
        members: [],
        start: { sample: e.sample, t: e.t, wallTime: e.wallTime },
        end: null,
        settled: null,
        peak: { levelDb: e.levelDb ?? -Infinity, sample: e.sample },
        acknowledged: false,
        capture: null,
        open: new Set(),
      };
      this.incidents.set(id, inc);
    }
    if (!inc.rules.includes(e.rule)) inc.rules.push(e.rule);
    if (
      !inc.members.some(
        (m) => memberKey({ ...m, kind: 'alarm', channel: e.channel, sample: 0, t: 0, wallTime: '' }) === key,
      )
    ) {
      inc.members.push({
        rule: e.rule,
        ...(e.band ? { band: e.band } : {}),
        ...(e.frequency !== undefined ? { frequency: e.frequency } : {}),
        ...(e.harmonic !== undefined ? { harmonic: e.harmonic } : {}),
      });
    }
    if (e.capture && !inc.capture) inc.capture = e.capture;
    if (e.acknowledged || e.state === 'acknowledged') inc.acknowledged = true;
    this.peak(inc, e.levelDb, e.amplitude, e.sample);
    if (e.peakLevelDb !== undefined) this.peak(inc, e.peakLevelDb, e.peakAmplitude, e.peakSample ?? e.sample);
    if (e.state === 'raised') {
      inc.open.add(key);
      inc.end = null;
      this.openByMember.set(key, id);
    } else if (e.state === 'settled') {
      if (e.levelDb !== undefined && (!inc.settled || e.levelDb > inc.settled.levelDb)) {
        inc.settled = {
          levelDb: e.levelDb,
          ...(e.amplitude !== undefined ? { amplitude: e.amplitude } : {}),
          ...(e.frequency !== undefined ? { frequency: e.frequency } : {}),
        };
      }
    } else if (e.state === 'cleared') {
      inc.open.delete(key);
      this.openByMember.delete(key);
      if (inc.open.size === 0) {
        inc.end = { sample: e.sample, t: e.t, wallTime: e.wallTime };
        this.closed.push(id);
        if (this.closed.length > CLOSED_KEPT) {
          const old = this.closed.shift()!;
          if (this.incidents.get(old)?.open.size === 0) this.incidents.delete(old);
        }
      }
    }
    return this.view(inc);
  }

  /** The highest level seen so far in the events of an incident (null: none yet). */
  peakOf(id: string): IncidentRecord['peak'] {
    const p = this.incidents.get(id)?.peak;
    return p && Number.isFinite(p.levelDb) ? { ...p } : null;
  }

  private peak(
    inc: { peak: { levelDb: number; amplitude?: number; sample: number } },
    levelDb: number | undefined,
    amplitude: number | undefined,
    sample: number,
  ): void {
    if (levelDb === undefined || !Number.isFinite(levelDb)) return;
    if (levelDb > inc.peak.levelDb || !Number.isFinite(inc.peak.levelDb)) {
      inc.peak = { levelDb, ...(amplitude !== undefined ? { amplitude } : {}), sample };
    }
  }

  private view(
    inc: Omit<IncidentRecord, 'peak'> & {
      peak: { levelDb: number; amplitude?: number; sample: number };
      open: Set<string>;
    },
  ): IncidentRecord {
    const { open: _open, ...rest } = inc;
    return { ...rest, peak: Number.isFinite(rest.peak.levelDb) ? { ...rest.peak } : null };
  }
}
