// Incidents: one fault is one incident, however many alarms it raises. The rules (DEVELOPERS.md "Incidents"):
//  - mains lines on one channel while a mains incident there is open: one ground loop, harmonics 1..k of one
//    fundamental (the channel has one measured fundamental);
//  - a spur at f joins an open incident on its channel holding a spur at f/k or k·f (k = 2..MAX_ORDER): one
//    switching source and its harmonics;
//  - a band rise joins an open incident on its channel with a raised band-rise member whose band overlaps it (one
//    floor rise seen by several bands), or one opened at most GROUP_SECONDS before with a line inside the band
//    (the line explains the band's rise), and a line raised at most GROUP_SECONDS after a band incident opened on
//    its channel, inside one of its bands, joins it;
//  - an alarm first seen while the average held clipped segments joins that channel's clip incident (an overload's
//    products are the overload);
//  - a coherent line joins an open incident on its first channel holding a line (spur, mains or coherent) within
//    a bin of its frequency: the line and its coherence with another channel are one pickup;
//  - clip, gap, link and overrun alarms of one rule on one channel join its open incident.
// Anything else opens an incident. An incident stays open while a member is raised and ends at its last member's
// clear. Ids are built from sample time (rule, channel, first sample), so a replay gives the same ids.
import type { AlarmState } from '../../dsp/detection/alarm-state.ts';
import type { EventRule, FloorlineEvent } from '../../protocol/events.ts';

/** A line and one at k× its frequency are one source for k up to this. */
export const MAX_ORDER = 10;
/** A band rise and lines that start within this many seconds of each other on one channel are one fault. */
export const GROUP_SECONDS = 5;
/** Closed incidents kept in memory (the history store keeps them all). */
export const MAX_CLOSED_INCIDENTS = 500;

export interface Stamp {
  sample: number;
  t: number;
  wallTime: string;
}

export interface MemberSpec {
  rule: EventRule;
  channel: string;
  band?: [number, number];
  frequency?: number;
  harmonic?: number;
  /** For coherent lines: the channels the line is coherent on. */
  channels?: string[];
  /** First clipped sample of the overload the alarm was first seen under (−1/undefined: none). */
  overloadFrom?: number;
  state?: AlarmState;
  /** The alarm's peak so far (rules that track one), for an end the rule did not judge (see closeOpen). */
  peakNow?: () => Peak | undefined;
}

export interface Peak {
  levelDb: number;
  amplitude?: number;
  sample: number;
}

export interface Member extends MemberSpec {
  incident: Incident;
  open: boolean;
  acknowledged: boolean;
  /** When the member joined (its raise). */
  joined: Stamp;
  settled?: { levelDb: number; amplitude?: number; frequency?: number };
  peak?: Peak;
}

export interface Incident {
  id: string;
  channel: string;
  start: Stamp;
  end: Stamp | null;
  members: Member[];
  acknowledged: boolean;
  /** Suppressed until this sample (−1: not shelved); new members inherit it. */
  shelvedUntil: number;
  notes: { text: string; sample: number; t: number; wallTime: string }[];
  capture: string | null;
}

/** The incident as `floorline incidents --json` and /api/incidents list it. */
export interface IncidentRecord {
  id: string;
  channel: string;
  rules: EventRule[];
  members: { rule: EventRule; band?: [number, number]; frequency?: number; harmonic?: number; channels?: string[] }[];
  start: Stamp;
  end: Stamp | null;
  settled: { levelDb: number; amplitude?: number; frequency?: number } | null;
  peak: { levelDb: number; amplitude?: number; sample: number } | null;
  acknowledged: boolean;
  notes: { text: string; t: number; wallTime: string }[];
  capture: string | null;
}

export class IncidentBook {
  private readonly open: Incident[] = [];
  private readonly closed: Incident[] = [];
  private readonly ids = new Set<string>();

  constructor(
    private readonly sampleRate: number,
    /** Line frequency tolerance, Hz (one bin). */
    private readonly binHz: number,
  ) {}

  /** Finds or opens the incident for an alarm raised at `at`; returns its member handle. */
  join(spec: MemberSpec, at: Stamp): Member {
    const inc = this.find(spec, at.sample) ?? this.openIncident(spec, at);
    const m: Member = { ...spec, incident: inc, open: true, acknowledged: false, joined: at };
    inc.members.push(m);
    // A fault already acknowledged or shelved does not ask again for its next harmonic or band.
    if (inc.acknowledged) {
      spec.state?.acknowledge();
      m.acknowledged = true;
    }
    if (inc.shelvedUntil > at.sample) spec.state?.shelve(inc.shelvedUntil);
    return m;
  }

  /** Marks a member cleared; the incident ends with its last open member. */
  leave(m: Member, at: Stamp, peak?: Member['peak']): void {
    if (!m.open) return;
    m.open = false;
    if (peak) m.peak = peak;
    const inc = m.incident;
    if (inc.members.some((x) => x.open)) return;
    inc.end = at;
    const i = this.open.indexOf(inc);
    if (i >= 0) this.open.splice(i, 1);
    this.closed.push(inc);
    if (this.closed.length > MAX_CLOSED_INCIDENTS) this.closed.shift();
  }

  /**
   * Ends every open incident at `at`, leaving each open member with its peak so far: for detectors about to be
   * replaced (a new baseline, new analysis settings), whose alarms would otherwise stay open forever. Returns the
   * members closed with the end each was given, so their owner can announce the ends.
   */
  closeOpen(at: Stamp): { member: Member; end: Stamp }[] {
    const closed: { member: Member; end: Stamp }[] = [];
    for (const inc of [...this.open]) {
      for (const m of inc.members) {
        if (!m.open) continue;
        // A stream-health alarm comes with its block, which may reach past the snapshot of the swap: it ends
        // where it began then, never before.
        const end = m.joined.sample > at.sample ? m.joined : at;
        closed.push({ member: m, end });
        this.leave(m, end, m.peakNow?.());
      }
    }
    return closed;
  }

  get(id: string): Incident | undefined {
    return this.open.find((i) => i.id === id) ?? this.closed.find((i) => i.id === id);
  }

  /** Open incidents first (oldest first), then the closed ones kept. */
  all(): Incident[] {
    return [...this.closed, ...this.open].sort((a, b) => a.start.sample - b.start.sample);
  }

  /** Acknowledges every raised member (no re-alarms) and the members that join later. */
  acknowledge(id: string): boolean {
    const inc = this.get(id);
    if (!inc) return false;
    inc.acknowledged = true;
    for (const m of inc.members) {
      if (!m.open) continue;
      m.state?.acknowledge();
      m.acknowledged = true;
    }
    return true;
  }

  /** Silences every member, and members that join later, until `untilSample`. */
  shelve(id: string, untilSample: number): boolean {
    const inc = this.get(id);
    if (!inc) return false;
    inc.shelvedUntil = untilSample;
    for (const m of inc.members) if (m.open) m.state?.shelve(untilSample);
    return true;
  }

  note(id: string, text: string, at: Stamp): boolean {
    const inc = this.get(id);
    if (!inc) return false;
    inc.notes.push({ text, ...at });
    return true;
  }

  /** Stamps a raised/settled/cleared event of a member with its incident, and keeps settled levels. */
  stamp(e: FloorlineEvent, m: Member): void {
    e.incident = m.incident.id;
    if (e.state === 'settled' && e.levelDb !== undefined) {
      m.settled = {
        levelDb: e.levelDb,
        ...(e.amplitude !== undefined ? { amplitude: e.amplitude } : {}),
        ...(e.frequency !== undefined ? { frequency: e.frequency } : {}),
      };
    }
    if (e.state === 'raised' && e.capture && !m.incident.capture) m.incident.capture = e.capture;
  }

  record(inc: Incident): IncidentRecord {
    const lead = leadMember(inc);
    const rules = [...new Set(inc.members.map((m) => m.rule))];
    return {
      id: inc.id,
      channel: inc.channel,
      rules,
      members: inc.members.map((m) => ({
        rule: m.rule,
        ...(m.band ? { band: m.band } : {}),
        ...(m.frequency !== undefined ? { frequency: m.frequency } : {}),
        ...(m.harmonic ? { harmonic: m.harmonic } : {}),
        ...(m.channels ? { channels: m.channels } : {}),
      })),
      start: inc.start,
      end: inc.end,
      settled: lead?.settled ?? inc.members.find((m) => m.settled)?.settled ?? null,
      peak: lead?.peak ?? null,
      acknowledged:
        inc.acknowledged ||
        (inc.members.length > 0 &&
          inc.members.every((m) => m.acknowledged || !m.open) &&
          inc.members.some((m) => m.acknowledged)),
      notes: inc.notes.map(({ text, t, wallTime }) => ({ text, t, wallTime })),
      capture: inc.capture,
    };
  }

  private openIncident(spec: MemberSpec, at: Stamp): Incident {
    const who = spec.channel === '*' ? 'stream' : spec.channel;
    let id = `${spec.rule}-${who}-s${at.sample}`;
    for (let n = 2; this.ids.has(id); n++) id = `${spec.rule}-${who}-s${at.sample}-${n}`;
    this.ids.add(id);
    const inc: Incident = {
      id,
      channel: spec.channel,
      start: at,
      end: null,
      members: [],
      acknowledged: false,
      shelvedUntil: -1,
      notes: [],
      capture: null,
    };
    this.open.push(inc);
    return inc;
  }

  private find(spec: MemberSpec, sample: number): Incident | undefined {
    const near = GROUP_SECONDS * this.sampleRate;
    const here = this.open.filter((i) => i.channel === spec.channel);
    if (spec.overloadFrom !== undefined && spec.overloadFrom >= 0) {
      const clip = [...here, ...this.closed.filter((i) => i.channel === spec.channel)]
        .filter((i) => i.members.some((m) => m.rule === 'clip') && i.start.sample >= spec.overloadFrom! - near)
        .pop();
      if (clip) return reopen(clip, this.open, this.closed);
    }
    const isLine = spec.rule === 'mains' || spec.rule === 'spur';
    for (const inc of here) {
      for (const m of inc.members) {
        if (!m.open) continue;
        if (spec.rule === 'coherent') {
          const line = m.rule === 'mains' || m.rule === 'spur' || m.rule === 'coherent';
          if (line && Math.abs((spec.frequency ?? NaN) - (m.frequency ?? NaN)) <= this.binHz) return inc;
          continue;
        }
        if (spec.rule === 'mains' && m.rule === 'mains') return inc;
        if (spec.rule === 'spur' && m.rule === 'spur' && this.harmonicPair(spec.frequency, m.frequency)) return inc;
        if (spec.rule === 'band-rise' && m.rule === 'band-rise' && overlaps(spec.band, m.band)) return inc;
        if (!isLine && spec.rule === m.rule && spec.rule !== 'band-rise') return inc;
      }
      if (sample - inc.start.sample > near) continue;
      if (
        spec.rule === 'band-rise' &&
        inc.members.some((m) => (m.rule === 'mains' || m.rule === 'spur') && inside(m.frequency, spec.band))
      )
        return inc;
      if (isLine && inc.members.some((m) => m.rule === 'band-rise' && inside(spec.frequency, m.band))) return inc;
    }
    return undefined;
  }

  /** f and g are one source's harmonics: g ≈ k·f or f ≈ k·g, 2 ≤ k ≤ MAX_ORDER, within a bin per order. */
  private harmonicPair(f: number | undefined, g: number | undefined): boolean {
    if (!(f! > 0 && g! > 0)) return false;
    const [lo, hi] = f! < g! ? [f!, g!] : [g!, f!];
    const k = Math.round(hi / lo);
    return k >= 2 && k <= MAX_ORDER && Math.abs(hi - k * lo) <= this.binHz * k;
  }
}

/** The member an incident's settled and peak levels are quoted from: its first, preferring a mains fundamental. */
function leadMember(inc: Incident): Member | undefined {
  return inc.members.find((m) => m.rule === 'mains' && m.harmonic === 1) ?? inc.members[0];
}

function reopen(inc: Incident, open: Incident[], closed: Incident[]): Incident {
  const i = closed.indexOf(inc);
  if (i >= 0) {
    closed.splice(i, 1);
    open.push(inc);
    inc.end = null;
  }
  return inc;
}

function overlaps(a?: [number, number], b?: [number, number]): boolean {
  return !!a && !!b && a[0] <= b[1] && b[0] <= a[1];
}

function inside(f: number | undefined, band?: [number, number]): boolean {
  return f !== undefined && !!band && f >= band[0] && f <= band[1];
}
