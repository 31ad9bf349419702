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

/** Rounds a level in dB to 0.01 dB: the same number goes into `levelDb` and the event's detail. */
export function roundDb(x: number): number {
  return Number(x.toFixed(2));
}
