// The event record written to events.jsonl and --events-out (one JSON object a line), as fixed by docs/ARCHITECTURE.md "Events".
// Pure types: the dashboard imports this module too.

export type EventKind = 'alarm' | 'info';
export type EventState = 'raised' | 'cleared';
export type EventRule = 'band-rise' | 'spur' | 'mains' | 'clip' | 'gap' | 'link' | 'overrun' | 'recording' | 'baseline';

export interface FloorlineEvent {
  kind: EventKind;
  rule: EventRule;
  state: EventState;
  /** Channel name, or "*" for events of the whole stream (link, overrun). */
  channel: string;
  /** Index of the last sample the decision used. */
  sample: number;
  /** sample / sampleRate, seconds. */
  t: number;
  /** Wall-clock label, ISO-8601 UTC. Never used for decisions. */
  wallTime: string;
  /** Band [low, high] in Hz, for band rules. */
  band?: [number, number];
  /** Measured level relative to baseline, dB (power ratio). */
  levelDb?: number;
  /** Threshold the level was compared with, dB. */
  thresholdDb?: number;
  /** For spur and mains: line frequency in Hz. */
  frequency?: number;
  /** For spur and mains: line amplitude in channel unit RMS. */
  amplitude?: number;
  /** For mains: harmonic number k of k × fundamental. */
  harmonic?: number;
  /** Path of the capture recording, relative to the data folder, when one was triggered. */
  capture?: string;
  /** Human-readable summary. */
  detail: string;
}

/** Serialises one event as a JSON Lines record (no trailing newline). Key order is stable for diffing. */
export function eventToJsonLine(e: FloorlineEvent): string {
  return JSON.stringify(e);
}
