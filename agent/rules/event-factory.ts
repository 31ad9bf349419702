// Builds FloorlineEvent records with the sample-time stamp every event carries.
import type { EventKind, EventRule, EventState, FloorlineEvent } from '../../protocol/events.ts';

export function makeEvent(
  rule: EventRule,
  state: EventState,
  channel: string,
  sample: number,
  sampleRate: number,
  wallTime: string,
  detail: string,
  extra: Partial<FloorlineEvent> = {},
  kind: EventKind = 'alarm',
): FloorlineEvent {
  return { kind, rule, state, channel, sample, t: sample / sampleRate, wallTime, ...extra, detail };
}

/** Rounds for the event log: enough digits to be useful, no float noise in diffs. */
export function round(x: number, digits = 4): number {
  return Number(x.toPrecision(digits));
}
