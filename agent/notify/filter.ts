// Which alarm events a sink is told about: its rules and states, a minimum duration (a raised alarm that clears
// sooner notifies nothing), and a quiet period per incident (a flapping fault notifies once, then settle and clear).
// All times are sample time, so a replay decides exactly as the live run did.
import type { FloorlineEvent } from '../../protocol/events.ts';
import type { NotifyState, SinkConfig } from '../config/rig-config.ts';

export const DEFAULT_STATES: readonly NotifyState[] = ['raised', 'settled', 'cleared'];

/** The incident an event belongs to (several alarms, e.g. mains harmonics, may share one). */
export function incidentKey(e: FloorlineEvent): string {
  return (e as FloorlineEvent & { incident?: string }).incident ?? alarmKey(e);
}

/** Stable identity of one alarm within its incident: rule, channel and what it is about. */
export function alarmKey(e: FloorlineEvent): string {
  const about = e.band
    ? e.band.join('-')
    : e.harmonic !== undefined
      ? `h${e.harmonic}`
      : e.rule === 'spur' && e.frequency !== undefined
        ? `${Math.round(e.frequency)}Hz`
        : '';
  const inc = (e as FloorlineEvent & { incident?: string }).incident;
  return `${inc ? inc + '/' : ''}${e.rule}:${e.channel}${about ? ':' + about : ''}`;
}

export class SinkFilter {
  private readonly states: ReadonlySet<string>;
  private readonly rules: ReadonlySet<string> | undefined;
  private readonly minDuration: number;
  private readonly quiet: number;
  /** Raised events held until they have lasted minDuration (key → event). */
  private readonly held = new Map<string, FloorlineEvent>();
  /** Keys whose raise was never notified (too short): their settle/clear are not notified either. */
  private readonly suppressed = new Set<string>();
  /** incident|state → t of the last notification, for the quiet period. */
  private readonly last = new Map<string, number>();

  constructor(sink: SinkConfig) {
    this.states = new Set(sink.states ?? DEFAULT_STATES);
    this.rules = sink.rules ? new Set(sink.rules) : undefined;
    this.minDuration = sink.minDurationSeconds ?? 0;
    this.quiet = sink.quietSeconds ?? 0;
  }

  private wants(e: FloorlineEvent): boolean {
    return e.kind === 'alarm' && this.states.has(e.state) && (this.rules === undefined || this.rules.has(e.rule));
  }

  private pass(e: FloorlineEvent): FloorlineEvent[] {
    const q = `${incidentKey(e)}|${e.state}`;
    const prev = this.last.get(q);
    if (this.quiet > 0 && prev !== undefined && e.t - prev < this.quiet) return [];
    this.last.set(q, e.t);
    return this.wants(e) ? [e] : [];
  }

  /** The events to notify now for an incoming event (possibly a held raise released, possibly none). */
  offer(e: FloorlineEvent): FloorlineEvent[] {
    const out = this.release(e.t);
    if (e.kind !== 'alarm') return out;
    const key = alarmKey(e);
    if (e.state === 'raised') {
      this.suppressed.delete(key);
      if (this.minDuration > 0) this.held.set(key, e);
      else out.push(...this.pass(e));
      return out;
    }
    if (this.held.has(key)) {
      // Ended (or settled) before the minimum duration: a clear drops the raise; a settle waits with it.
      if ((e.state as string) === 'cleared') {
        this.held.delete(key);
        this.suppressed.add(key);
      }
      return out;
    }
    if (this.suppressed.has(key)) {
      if ((e.state as string) === 'cleared') this.suppressed.delete(key);
      return out;
    }
    out.push(...this.pass(e));
    return out;
  }

  /** Raised events that have now lasted the minimum duration (t = current sample time). */
  release(t: number): FloorlineEvent[] {
    const out: FloorlineEvent[] = [];
    for (const [key, e] of this.held) {
      if (t - e.t >= this.minDuration) {
        this.held.delete(key);
        out.push(...this.pass(e));
      }
    }
    return out;
  }
}
