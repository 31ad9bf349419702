// Rule configuration: margins, probabilities and timings (given in seconds of sample time, used in samples),
// from defaults, a JSON config file and --band flags. Every field is validated with a message naming it.
import { readFile } from 'node:fs/promises';
import type { BandSpec } from '../../dsp/detection/band-compare.ts';
import type { AlarmTiming } from '../../dsp/detection/alarm-state.ts';
import type { MainsSetting } from '../../dsp/detection/mains.ts';
import { InputError } from '../errors.ts';
import { parseBand } from '../../protocol/bands.ts';

export interface TimingSeconds {
  onDelay: number;
  offDelay: number;
  deadband: number;
  reAlarm: number;
}

export interface RulesConfig {
  band: TimingSeconds & {
    /** User margin, dB: the threshold is never below it. */
    marginDb: number;
    /** False-alarm probability per evaluation for the statistical bound. */
    alpha: number;
    /** Bands for every channel; empty = defaults (decades plus the whole usable band). */
    bands: BandSpec[];
    /** Per-channel bands, overriding `bands` for that channel. */
    channelBands: Record<string, BandSpec[]>;
  };
  spur: TimingSeconds & {
    /** Height over the local floor (and over the baseline at that bin), dB. */
    marginDb: number;
    alpha: number;
    /** Running-median half-width in bins (0 = automatic). */
    floorHalfWidth: number;
  };
  mains: { frequency: MainsSetting; maxHarmonic: number };
  /** A line present and coherent on two channels (agent/rules/coherence-detector.ts). */
  coherent: TimingSeconds & {
    /** false: no coherent alarms (the snapshots and status still carry the pairs' coherence). */
    enabled: boolean;
    /** Pairs "A:B" (names or 0-based indices) to compute; absent: every pair of 2–4 channels; []: none. */
    pairs?: string[];
    /** Coherence a line must exceed however many averages the estimate holds (chance coherence of weak lines). */
    minCoherence: number;
    /** Probability that two independent series exceed the statistical bound at one line (per evaluation). */
    alpha: number;
    /**
     * Equivalent averages the estimate needs before it is judged: the chance bound assumes independent segments,
     * which a few overlapping ones are not (with one segment the coherence is 1 whatever the signals).
     */
    minAverages: number;
  };
  /**
   * Length of the recent estimate, s: the short window beside the long average that judges clears and gives the
   * settled and peak levels (dsp/detection/recent-spectrum.ts). Shorter stamps ends sooner; longer is steadier.
   */
  recentWindow: number;
  /** Clip clears after this long without a clipped sample, s. */
  clipHold: number;
  /** Overrun clears after this long without a dropped block, s. */
  overrunHold: number;
}

export function defaultRules(): RulesConfig {
  return {
    band: { marginDb: 3, alpha: 1e-6, bands: [], channelBands: {}, onDelay: 0.5, offDelay: 2, deadband: 1, reAlarm: 0 },
    spur: { marginDb: 10, alpha: 1e-6, floorHalfWidth: 0, onDelay: 0.5, offDelay: 2, deadband: 3, reAlarm: 0 },
    mains: { frequency: 'auto', maxHarmonic: 40 },
    coherent: {
      enabled: true,
      minCoherence: 0.5,
      alpha: 1e-3,
      minAverages: 8,
      onDelay: 0.5,
      offDelay: 2,
      deadband: 0.1,
      reAlarm: 0,
    },
    recentWindow: 3,
    clipHold: 1,
    overrunHold: 1,
  };
}

export function timingInSamples(t: TimingSeconds, sampleRate: number): AlarmTiming {
  return {
    onDelay: Math.round(t.onDelay * sampleRate),
    offDelay: Math.round(t.offDelay * sampleRate),
    deadband: t.deadband,
    reAlarm: Math.round(t.reAlarm * sampleRate),
  };
}

/** Merges a parsed config object over the defaults, validating each field. */
export function parseRules(value: unknown, where: string): RulesConfig {
  const r = defaultRules();
  const fail = (what: string): never => {
    throw new InputError(`rules ${where}: ${what}.`);
  };
  if (typeof value !== 'object' || value === null) fail('is not a JSON object');
  const v = value as Record<string, unknown>;
  for (const k of Object.keys(v)) if (!(k in r)) fail(`unknown key "${k}"; known keys: ${Object.keys(r).join(', ')}`);
  const num = (
    obj: Record<string, unknown>,
    key: string,
    path: string,
    min: number,
    max: number,
    target: Record<string, unknown>,
  ): void => {
    if (!(key in obj)) return;
    const x = obj[key];
    if (typeof x !== 'number' || !Number.isFinite(x) || x < min || x > max)
      fail(`${path}.${key} must be a number from ${min} to ${max}, got ${JSON.stringify(x)}`);
    target[key] = x;
  };
  const timing = (obj: Record<string, unknown>, path: string, target: Record<string, unknown>): void => {
    for (const k of ['onDelay', 'offDelay', 'reAlarm']) num(obj, k, path, 0, 86400, target);
    num(obj, 'deadband', path, 0, 60, target);
  };
  const bands = (x: unknown, path: string): BandSpec[] => {
    if (!Array.isArray(x)) return fail(`${path} must be a list of "LO:HI" strings`);
    return x.map((b) => {
      if (typeof b !== 'string') return fail(`${path} holds ${JSON.stringify(b)}, not a "LO:HI" string`);
      try {
        return parseBand(b);
      } catch (err) {
        return fail(`${path}: ${(err as Error).message}`);
      }
    });
  };
  if (v.band !== undefined) {
    const b = v.band as Record<string, unknown>;
    timing(b, 'band', r.band as unknown as Record<string, unknown>);
    num(b, 'marginDb', 'band', 0, 60, r.band as unknown as Record<string, unknown>);
    num(b, 'alpha', 'band', 1e-15, 0.1, r.band as unknown as Record<string, unknown>);
    if (b.bands !== undefined) r.band.bands = bands(b.bands, 'band.bands');
    if (b.channelBands !== undefined) {
      if (typeof b.channelBands !== 'object' || b.channelBands === null)
        fail('band.channelBands must map channel names to band lists');
      for (const [ch, list] of Object.entries(b.channelBands as Record<string, unknown>))
        r.band.channelBands[ch] = bands(list, `band.channelBands.${ch}`);
    }
  }
  if (v.spur !== undefined) {
    const s = v.spur as Record<string, unknown>;
    timing(s, 'spur', r.spur as unknown as Record<string, unknown>);
    num(s, 'marginDb', 'spur', 3, 60, r.spur as unknown as Record<string, unknown>);
    num(s, 'alpha', 'spur', 1e-15, 0.1, r.spur as unknown as Record<string, unknown>);
    num(s, 'floorHalfWidth', 'spur', 0, 1024, r.spur as unknown as Record<string, unknown>);
  }
  if (v.mains !== undefined) {
    const m = v.mains as Record<string, unknown>;
    if (m.frequency !== undefined) {
      if (m.frequency !== 'auto' && m.frequency !== 50 && m.frequency !== 60)
        fail(`mains.frequency must be "auto", 50 or 60, got ${JSON.stringify(m.frequency)}`);
      r.mains.frequency = m.frequency as MainsSetting;
    }
    num(m, 'maxHarmonic', 'mains', 1, 200, r.mains as unknown as Record<string, unknown>);
  }
  if (v.coherent !== undefined) {
    const c = v.coherent as Record<string, unknown>;
    if (typeof c !== 'object' || c === null || Array.isArray(c)) fail('coherent must be an object');
    const known = [
      'enabled',
      'pairs',
      'minCoherence',
      'alpha',
      'minAverages',
      'onDelay',
      'offDelay',
      'deadband',
      'reAlarm',
    ];
    for (const k of Object.keys(c))
      if (!known.includes(k)) fail(`unknown key "coherent.${k}"; known keys: ${known.join(', ')}`);
    const target = r.coherent as unknown as Record<string, unknown>;
    for (const k of ['onDelay', 'offDelay', 'reAlarm']) num(c, k, 'coherent', 0, 86400, target);
    num(c, 'deadband', 'coherent', 0, 0.5, target);
    num(c, 'minCoherence', 'coherent', 0.05, 0.999, target);
    num(c, 'alpha', 'coherent', 1e-15, 0.1, target);
    num(c, 'minAverages', 'coherent', 2, 10000, target);
    if (c.enabled !== undefined) {
      if (typeof c.enabled !== 'boolean')
        fail(`coherent.enabled must be true or false, got ${JSON.stringify(c.enabled)}`);
      r.coherent.enabled = c.enabled as boolean;
    }
    if (c.pairs !== undefined) {
      if (!Array.isArray(c.pairs) || !c.pairs.every((x) => typeof x === 'string' && /^[^:]+:[^:]+$/.test(x)))
        fail('coherent.pairs must be a list of "A:B" strings (channel names or 0-based indices)');
      r.coherent.pairs = [...(c.pairs as string[])];
    }
  }
  num(v, 'recentWindow', '', 0.1, 600, r as unknown as Record<string, unknown>);
  num(v, 'clipHold', '', 0, 3600, r as unknown as Record<string, unknown>);
  num(v, 'overrunHold', '', 0, 3600, r as unknown as Record<string, unknown>);
  return r;
}

export async function loadRules(path: string): Promise<RulesConfig> {
  let text: string;
  try {
    text = await readFile(path, 'utf8');
  } catch (err) {
    throw new InputError(`rules ${path}: cannot read it (${(err as Error).message}); give a JSON rules file.`);
  }
  try {
    return parseRules(JSON.parse(text), path);
  } catch (err) {
    if (err instanceof InputError) throw err;
    throw new InputError(`rules ${path}: not JSON (${(err as Error).message}).`);
  }
}
