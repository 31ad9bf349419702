// Stable string ids of bands and alarms, shared by the agent and the dashboard. An id is made by these functions
// only, from the edges as events carry them (6 significant digits), so both ends name a band or an alarm the same
// way and requests match ids by string equality, never by comparing float edges.
import type { EventRule } from './events.ts';

/** The edge as events and ids carry it: 6 significant digits. */
export function bandEdge(x: number): number {
  return Number(x.toPrecision(6));
}

/** Id of a band of a channel, e.g. "bridge:20-2000". */
export function bandId(channel: string, low: number, high: number): string {
  return `${channel}:${bandEdge(low)}-${bandEdge(high)}`;
}

/** What names an alarm: the fields of its events. */
export interface AlarmKey {
  rule: EventRule;
  channel: string;
  band?: readonly [number, number];
  harmonic?: number;
  frequency?: number;
  channels?: readonly string[];
}

/**
 * Id of an alarm condition (one row of the alarm table): per band for band rules, per harmonic for mains, per
 * 0.1 Hz line for spurs, per channel pair and 0.1 Hz line for coherent lines ("coherent/bridge+shorted/50.0"),
 * else per rule and channel. E.g. "band-rise/bridge:20-2000", "mains/bridge/h3", "clip/ch0".
 */
export function alarmId(a: AlarmKey): string {
  if (a.rule === 'band-rise' && a.band) return `band-rise/${bandId(a.channel, a.band[0], a.band[1])}`;
  if (a.rule === 'mains') return `mains/${a.channel}/h${a.harmonic ?? 0}`;
  if (a.rule === 'spur' && a.frequency !== undefined) return `spur/${a.channel}/${a.frequency.toFixed(1)}`;
  if (a.rule === 'coherent' && a.frequency !== undefined && a.channels)
    return `coherent/${a.channels.join('+')}/${a.frequency.toFixed(1)}`;
  return `${a.rule}/${a.channel}`;
}
