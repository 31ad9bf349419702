// Scenario files for `floorline simulate`: our own JSON description of a board, its channels, the signals on
// each channel, and faults on the link. Documented in agent/sim/SCENARIO.md; parsed and checked here so a bad
// file fails with the path of the offending field and what to write instead.
import {
  SAMPLE_FORMATS,
  formatFullScale,
  maxFramesPerFrame,
  MAX_CHANNELS,
  type SampleFormat,
} from '../framing/protocol.ts';

export type SignalSpec =
  | { kind: 'white'; density: number }
  | { kind: 'flicker'; density: number; corner: number; lowest?: number }
  | { kind: 'tone'; frequency: number; rms: number; phase?: number; start?: number; end?: number }
  | {
      kind: 'mains';
      fundamental: number;
      harmonics: number[];
      drift?: { span: number; period: number };
      start?: number;
      end?: number;
    }
  | { kind: 'band-step'; density: number; low: number; high: number; start: number; end: number }
  | { kind: 'overload'; start: number; end: number; frequency: number; overdrive: number };

export interface ChannelSpec {
  name: string;
  unit: string;
  /** Unit per count. */
  perCount: number;
  /** Peak counts at the converter's end codes. */
  fullScale: number;
  /** Front-end gain ahead of the converter, V/V (recorded in the WAV metadata; the signals are at the converter). */
  gain?: number;
  /** The channel's noise budget at the amplifier input (recorded in the WAV metadata). */
  budget?: ChannelBudget;
  signals: SignalSpec[];
}

export interface ChannelBudget {
  /** Source resistance, Ω, and its temperature, K. */
  sourceOhms: number;
  kelvin: number;
  /** Amplifier input voltage density, V/√Hz, and current density, A/√Hz. */
  amplifierDensity: number;
  amplifierCurrent: number;
}

export interface LinkFaults {
  /** Frames not sent (the board's counter still advances): a gap on the host. */
  drop: { at: number; frames: number }[];
  /** Bytes flipped inside the frame sent at `at` s: a CRC error (and a gap) on the host. */
  corrupt: { at: number; bytes: number }[];
  /** Random bytes inserted before the frame sent at `at` s: a sync error, nothing lost. */
  garbage: { at: number; bytes: number }[];
}

export interface Scenario {
  rate: number;
  format: SampleFormat;
  board: string;
  firmware: string;
  /** Seconds of sample time; undefined = until stopped. */
  duration?: number;
  seed: number;
  /** Sample time per frame, ms (default 10). */
  frameMs: number;
  channels: ChannelSpec[];
  link: LinkFaults;
}

export class ScenarioError extends Error {
  override readonly name = 'ScenarioError';
}

type Obj = Record<string, unknown>;

class Checker {
  constructor(private readonly where: string) {}
  fail(path: string, what: string): never {
    throw new ScenarioError(`${this.where}: ${path} ${what}`);
  }
  obj(v: unknown, path: string): Obj {
    if (typeof v !== 'object' || v === null || Array.isArray(v)) this.fail(path, 'must be a JSON object');
    return v as Obj;
  }
  num(
    o: Obj,
    key: string,
    path: string,
    opts: { min?: number; above?: number; integer?: boolean; optional?: boolean } = {},
  ): number {
    const v = o[key];
    if (v === undefined && opts.optional) return NaN;
    const p = `${path}.${key}`;
    if (typeof v !== 'number' || !Number.isFinite(v))
      this.fail(p, `must be a number, e.g. "${key}": ${opts.min ?? opts.above ?? 1}`);
    if (opts.integer && !Number.isInteger(v)) this.fail(p, `must be a whole number, got ${v}`);
    if (opts.min !== undefined && v < opts.min) this.fail(p, `must be ≥ ${opts.min}, got ${v}`);
    if (opts.above !== undefined && !(v > opts.above)) this.fail(p, `must be > ${opts.above}, got ${v}`);
    return v;
  }
  str(o: Obj, key: string, path: string, fallback?: string): string {
    const v = o[key];
    if (v === undefined && fallback !== undefined) return fallback;
    if (typeof v !== 'string' || v === '') this.fail(`${path}.${key}`, 'must be a non-empty string');
    return v;
  }
  arr(o: Obj, key: string, path: string, optional = false): unknown[] {
    const v = o[key];
    if (v === undefined && optional) return [];
    if (!Array.isArray(v)) this.fail(`${path}.${key}`, 'must be a JSON array');
    return v;
  }
  keys(o: Obj, allowed: string[], path: string): void {
    for (const k of Object.keys(o))
      if (!allowed.includes(k)) this.fail(`${path}.${k}`, `is not a known key; known: ${allowed.join(', ')}`);
  }
}

const SIGNAL_KINDS = ['white', 'flicker', 'tone', 'mains', 'band-step', 'overload'];

function parseBudget(ck: Checker, v: unknown, path: string): ChannelBudget {
  const o = ck.obj(v, path);
  ck.keys(o, ['sourceOhms', 'kelvin', 'amplifierDensity', 'amplifierCurrent'], path);
  return {
    sourceOhms: ck.num(o, 'sourceOhms', path, { above: 0 }),
    kelvin: ck.num(o, 'kelvin', path, { above: 0 }),
    amplifierDensity: ck.num(o, 'amplifierDensity', path, { min: 0 }),
    amplifierCurrent: o.amplifierCurrent === undefined ? 0 : ck.num(o, 'amplifierCurrent', path, { min: 0 }),
  };
}

function parseSignal(ck: Checker, v: unknown, path: string, rate: number): SignalSpec {
  const o = ck.obj(v, path);
  const nyq = rate / 2;
  const freq = (key: string, zeroOk = false): number => {
    const f = ck.num(o, key, path, zeroOk ? { min: 0 } : { above: 0 });
    if (f >= nyq) ck.fail(`${path}.${key}`, `is ${f} Hz, at or above Nyquist (${nyq} Hz)`);
    return f;
  };
  const span = (): { start: number; end: number } => {
    const start = ck.num(o, 'start', path, { min: 0 });
    const end = ck.num(o, 'end', path, { above: start });
    return { start, end };
  };
  // Optional on/off times for lines (tone, mains): absent = present all the time; end absent = to the end.
  const optionalSpan = (): { start?: number; end?: number } => {
    if (o.start === undefined && o.end === undefined) return {};
    const start = o.start === undefined ? 0 : ck.num(o, 'start', path, { min: 0 });
    return o.end === undefined ? { start } : { start, end: ck.num(o, 'end', path, { above: start }) };
  };
  switch (o.kind) {
    case 'white':
      ck.keys(o, ['kind', 'density'], path);
      return { kind: 'white', density: ck.num(o, 'density', path, { min: 0 }) };
    case 'flicker': {
      ck.keys(o, ['kind', 'density', 'corner', 'lowest'], path);
      const lowest = ck.num(o, 'lowest', path, { above: 0, optional: true });
      return {
        kind: 'flicker',
        density: ck.num(o, 'density', path, { min: 0 }),
        corner: ck.num(o, 'corner', path, { above: 0 }),
        ...(Number.isNaN(lowest) ? {} : { lowest }),
      };
    }
    case 'tone': {
      ck.keys(o, ['kind', 'frequency', 'rms', 'phase', 'start', 'end'], path);
      const phase = ck.num(o, 'phase', path, { optional: true });
      return {
        kind: 'tone',
        frequency: freq('frequency'),
        rms: ck.num(o, 'rms', path, { min: 0 }),
        ...(Number.isNaN(phase) ? {} : { phase }),
        ...optionalSpan(),
      };
    }
    case 'mains': {
      ck.keys(o, ['kind', 'fundamental', 'harmonics', 'drift', 'start', 'end'], path);
      const fundamental = freq('fundamental');
      const harmonics = ck.arr(o, 'harmonics', path);
      if (harmonics.length === 0)
        ck.fail(`${path}.harmonics`, 'must list the RMS of the fundamental and any harmonics, e.g. [2e-6, 5e-7]');
      harmonics.forEach((h, k) => {
        if (typeof h !== 'number' || !(h >= 0)) ck.fail(`${path}.harmonics[${k}]`, 'must be an RMS ≥ 0');
      });
      let drift: { span: number; period: number } | undefined;
      if (o.drift !== undefined) {
        const d = ck.obj(o.drift, `${path}.drift`);
        ck.keys(d, ['span', 'period'], `${path}.drift`);
        drift = {
          span: ck.num(d, 'span', `${path}.drift`, { min: 0 }),
          period: ck.num(d, 'period', `${path}.drift`, { above: 0 }),
        };
      }
      if (harmonics.length * (fundamental + (drift?.span ?? 0)) >= nyq) {
        ck.fail(
          `${path}.harmonics`,
          `has ${harmonics.length} entries; the top one reaches Nyquist (${nyq} Hz); list fewer`,
        );
      }
      return {
        kind: 'mains',
        fundamental,
        harmonics: harmonics as number[],
        ...(drift ? { drift } : {}),
        ...optionalSpan(),
      };
    }
    case 'band-step': {
      ck.keys(o, ['kind', 'density', 'low', 'high', 'start', 'end'], path);
      const low = freq('low', true);
      const high = freq('high');
      if (!(high > low)) ck.fail(`${path}.high`, `must be above low (${low} Hz)`);
      return { kind: 'band-step', density: ck.num(o, 'density', path, { min: 0 }), low, high, ...span() };
    }
    case 'overload':
      ck.keys(o, ['kind', 'start', 'end', 'frequency', 'overdrive'], path);
      return {
        kind: 'overload',
        ...span(),
        frequency: freq('frequency'),
        overdrive: ck.num(o, 'overdrive', path, { above: 0 }),
      };
    default:
      return ck.fail(`${path}.kind`, `must be one of ${SIGNAL_KINDS.join(', ')}, got ${JSON.stringify(o.kind)}`);
  }
}

function parseFaults(ck: Checker, v: unknown): LinkFaults {
  const out: LinkFaults = { drop: [], corrupt: [], garbage: [] };
  if (v === undefined) return out;
  const o = ck.obj(v, 'link');
  ck.keys(o, ['drop', 'corrupt', 'garbage'], 'link');
  (['drop', 'corrupt', 'garbage'] as const).forEach((key) => {
    const count = key === 'drop' ? 'frames' : 'bytes';
    ck.arr(o, key, 'link', true).forEach((e, i) => {
      const p = `link.${key}[${i}]`;
      const f = ck.obj(e, p);
      ck.keys(f, ['at', count], p);
      const at = ck.num(f, 'at', p, { min: 0 });
      const n = ck.num(f, count, p, { min: 1, integer: true });
      if (key === 'drop') out.drop.push({ at, frames: n });
      else out[key].push({ at, bytes: n });
    });
  });
  return out;
}

/** Parses scenario JSON text; `where` (the file name) labels errors. */
export function parseScenario(text: string, where: string): Scenario {
  const ck = new Checker(where);
  let raw: unknown;
  try {
    raw = JSON.parse(text);
  } catch (err) {
    throw new ScenarioError(`${where}: not valid JSON (${(err as Error).message})`);
  }
  const o = ck.obj(raw, 'scenario');
  ck.keys(
    o,
    ['rate', 'format', 'board', 'firmware', 'duration', 'seed', 'frameMs', 'channels', 'link', 'notes'],
    'scenario',
  );
  const rate = ck.num(o, 'rate', 'scenario', { above: 0, integer: true });
  const format = (o.format ?? 'int24') as SampleFormat;
  if (!SAMPLE_FORMATS.includes(format)) ck.fail('scenario.format', `must be one of ${SAMPLE_FORMATS.join(', ')}`);
  const duration = ck.num(o, 'duration', 'scenario', { above: 0, optional: true });
  const seed = ck.num(o, 'seed', 'scenario', { min: 0, integer: true, optional: true });
  const frameMs = ck.num(o, 'frameMs', 'scenario', { above: 0, optional: true });
  const channelsRaw = ck.arr(o, 'channels', 'scenario');
  if (channelsRaw.length < 1 || channelsRaw.length > MAX_CHANNELS)
    ck.fail('scenario.channels', `must list 1..${MAX_CHANNELS} channels`);
  const limit = formatFullScale(format);
  const channels = channelsRaw.map((c, i): ChannelSpec => {
    const p = `channels[${i}]`;
    const co = ck.obj(c, p);
    ck.keys(co, ['name', 'unit', 'perCount', 'fullScale', 'gain', 'budget', 'signals'], p);
    const fullScale =
      co.fullScale === undefined && Number.isFinite(limit) ? limit : ck.num(co, 'fullScale', p, { above: 0 });
    if (fullScale > limit) ck.fail(`${p}.fullScale`, `is ${fullScale}, more than ${format} holds (${limit})`);
    return {
      name: ck.str(co, 'name', p, `ch${i}`),
      unit: ck.str(co, 'unit', p, 'V'),
      perCount: ck.num(co, 'perCount', p, { above: 0 }),
      fullScale,
      ...(co.gain !== undefined ? { gain: ck.num(co, 'gain', p, { above: 0 }) } : {}),
      ...(co.budget !== undefined ? { budget: parseBudget(ck, co.budget, `${p}.budget`) } : {}),
      signals: ck.arr(co, 'signals', p).map((s, k) => parseSignal(ck, s, `${p}.signals[${k}]`, rate)),
    };
  });
  const names = new Set(channels.map((c) => c.name));
  if (names.size !== channels.length)
    ck.fail('scenario.channels', 'have repeated names; give each channel its own name');
  const scenario: Scenario = {
    rate,
    format,
    board: ck.str(o, 'board', 'scenario', 'simulated board'),
    firmware: ck.str(o, 'firmware', 'scenario', 'floorline-sim'),
    ...(Number.isNaN(duration) ? {} : { duration }),
    seed: Number.isNaN(seed) ? 1 : seed,
    frameMs: Number.isNaN(frameMs) ? 10 : frameMs,
    channels,
    link: parseFaults(ck, o.link),
  };
  const perFrame = framesPerFrame(scenario);
  if (perFrame < 1) ck.fail('scenario.frameMs', `gives less than one sample per frame at ${rate} Hz; raise it`);
  const max = maxFramesPerFrame(channels.length, format);
  if (perFrame > max)
    ck.fail('scenario.frameMs', `gives ${perFrame} instants per frame, more than one frame holds (${max}); lower it`);
  return scenario;
}

/** Sample instants per frame (one frame per block). */
export function framesPerFrame(s: Scenario): number {
  return Math.round((s.rate * s.frameMs) / 1000);
}
