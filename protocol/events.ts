// The event record written to events.jsonl and --events-out (one JSON object a line), as fixed by docs/ARCHITECTURE.md "Events".
// Pure types: the dashboard imports this module too.

export type EventKind = 'alarm' | 'info';
/** `settled`: once per raised alarm, when its recent estimate holds only post-onset data (the level to quote). */
/** Alarm events are raised, settled or cleared; an operator's acknowledge or shelve is an info event of its own. */
export type EventState = 'raised' | 'settled' | 'cleared' | 'acknowledged' | 'shelved';
export type EventRule =
  | 'band-rise'
  | 'spur'
  | 'mains'
  | 'clip'
  | 'gap'
  | 'link'
  | 'overrun'
  | 'nonfinite'
  | 'internal'
  | 'recording'
  | 'baseline'
  | 'notify'
  | 'disk'
  | 'retention'
  | 'limit'
  | 'coherent';
// 'internal': an info event of the agent itself, e.g. an attached part that failed and was disabled.

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
  /** For spur and mains: line frequency in Hz; for limit: frequency of the worst excess. */
  frequency?: number;
  /** For spur and mains: line amplitude in channel unit RMS. */
  amplitude?: number;
  /** For mains: harmonic number k of k × fundamental. */
  harmonic?: number;
  /** Stable id of the incident the alarm belongs to (one fault = one incident; DEVELOPERS.md "Incidents"). */
  incident?: string;
  /** cleared: the highest recent-window level over the alarm's life, dB, and the sample it was read at. */
  peakLevelDb?: number;
  peakSample?: number;
  /** cleared, spur and mains: the highest floor-subtracted line amplitude over the alarm's life, unit RMS. */
  peakAmplitude?: number;
  /** cleared: from the raise to the clear, seconds of sample time. */
  durationSeconds?: number;
  /** For coherent: the channels the line is coherent on (`channel` is the first). */
  channels?: string[];
  /** For coherent: magnitude-squared coherence of the line between the channels, 0..1. */
  coherence?: number;
  /** For coherent, cleared: the highest coherence while raised (at peakSample). */
  peakCoherence?: number;
  /** For limit: margin below the mask at the worst bin, dB (negative: the estimate exceeds the mask). */
  marginDb?: number;
  /** 'input': the channel's calibration divides by its front-end gain, so amplitudes (and densities) are at the
   *  amplifier input; absent: at the converter, in the channel's own units. */
  referredTo?: 'input';
  /** Path of the capture recording, relative to the data folder, when one was triggered. */
  capture?: string;
  /** Human-readable summary. */
  detail: string;
}

/** Serialises one event as a JSON Lines record (no trailing newline). Key order is stable for diffing. */
export function eventToJsonLine(e: FloorlineEvent): string {
  return JSON.stringify(e);
}
