// Drives the real pipeline and detectors with seeded synthetic signals, in sample time, synchronously: the
// measurement bench behind tests/alarms and DETECTION.md. A scenario is a quiet floor (white noise, optionally a
// 1/f part) plus one fault switched on at an onset sample; the baseline is captured from an independent quiet run.
import { FlickerNoise } from '../../dsp/synth/flicker-noise.ts';
import { MainsPickup } from '../../dsp/synth/mains.ts';
import { Tone } from '../../dsp/synth/tone.ts';
import { BandStep } from '../../dsp/synth/band-step.ts';
import { WhiteNoise } from '../../dsp/synth/white-noise.ts';
import { deriveSeed, type SynthComponent } from '../../dsp/synth/component.ts';
import type { FloorlineEvent } from '../../protocol/events.ts';
import type { AveragingSpec } from '../../protocol/settings.ts';
import type { StreamInfo } from '../../protocol/stream.ts';
import { Pipeline } from '../../agent/pipeline/pipeline.ts';
import type { AnalysisChoice } from '../../agent/pipeline/analyser.ts';
import { BaselineCapture } from '../../agent/baseline/capture.ts';
import type { BaselineFile } from '../../agent/baseline/format.ts';
import { AlarmHook } from '../../agent/rules/alarm-hook.ts';
import type { DetectorStatus } from '../../agent/rules/detectors.ts';
import { defaultBands } from '../../agent/rules/default-bands.ts';
import type { RulesConfig } from '../../agent/rules/rules.ts';
import { makeWindow, windowMainLobeHalfWidth } from '../../dsp/windows.ts';

export interface Floor {
  /** White density, V/√Hz. */
  white: number;
  /** Optional 1/f part: density at its corner equals `white` there (D·√(fc/f) with D = white). */
  corner?: number;
}

export type Fault =
  | { kind: 'none' }
  | { kind: 'tone'; frequency: number; rms: number }
  | { kind: 'mains'; fundamental: number; harmonics: number[]; driftSpan?: number }
  | { kind: 'band-rise'; low: number; high: number; riseDb: number }
  | { kind: 'corner'; to: number }
  /** A sine of `peak` volts for `seconds`, clipped at the bench's full scale (an overload). */
  | { kind: 'overload'; frequency: number; peak: number; seconds: number };

export interface Bench {
  sampleRate: number;
  analysis: AnalysisChoice;
  averaging?: AveragingSpec;
  floor: Floor;
  /** Converter full scale, V (scale 1 V per count): samples are clipped to ±fullScale. Default: no limit. */
  fullScale?: number;
}

/** The frequently used bench: 4 kS/s, 1024-point Hann segments at 50 %, the pipeline's default averaging. */
export const DEFAULT_BENCH: Bench = {
  sampleRate: 4000,
  analysis: { segment: 1024, window: 'hann', overlap: 0.5, detrend: 'mean' },
  floor: { white: 10e-9 },
};

const BLOCK = 2000;

function floorComponents(bench: Bench, seed: number): SynthComponent[] {
  const fs = bench.sampleRate;
  const c: SynthComponent[] = [
    new WhiteNoise({ density: bench.floor.white, sampleRate: fs, seed: deriveSeed(seed, 1) }),
  ];
  if (bench.floor.corner) {
    c.push(
      new FlickerNoise({
        density: bench.floor.white,
        corner: bench.floor.corner,
        sampleRate: fs,
        seed: deriveSeed(seed, 2),
        lowest: 0.05,
      }),
    );
  }
  return c;
}

function faultComponents(
  bench: Bench,
  fault: Fault,
  onsetSeconds: number,
  endSeconds: number,
  seed: number,
): SynthComponent[] {
  const fs = bench.sampleRate;
  switch (fault.kind) {
    case 'none':
      return [];
    case 'tone':
      return [new Tone({ frequency: fault.frequency, rms: fault.rms, sampleRate: fs })];
    case 'mains':
      return [
        new MainsPickup({
          fundamental: fault.fundamental,
          harmonics: fault.harmonics,
          sampleRate: fs,
          driftSpan: fault.driftSpan ?? 0.05,
        }),
      ];
    case 'band-rise': {
      // Added power D² = floor² · (10^(rise/10) − 1) over the band makes the band's floor rise by riseDb.
      const density = bench.floor.white * Math.sqrt(10 ** (fault.riseDb / 10) - 1);
      return [
        new BandStep({
          density,
          low: fault.low,
          high: fault.high,
          start: onsetSeconds,
          end: endSeconds,
          sampleRate: fs,
          seed: deriveSeed(seed, 3),
        }),
      ];
    }
    case 'overload':
      return [new Tone({ frequency: fault.frequency, rms: fault.peak / Math.SQRT2, sampleRate: fs })];
    case 'corner': {
      // D²·fc/f grows to D²·fc'/f: add an independent 1/f part with corner fc' − fc.
      const base = bench.floor.corner ?? 0;
      return [
        new FlickerNoise({
          density: bench.floor.white,
          corner: fault.to - base,
          sampleRate: fs,
          seed: deriveSeed(seed, 4),
          lowest: 0.05,
        }),
      ];
    }
  }
}

interface Generator {
  info: StreamInfo;
  next(out: Float64Array, first: number, frames: number): void;
}

/**
 * Floor plus a fault gated on at `onset` (samples): faults that lack their own start are generated and then gated,
 * abruptly or, with `ramp` samples, by a raised-cosine fade-in (a switch-on transient inside one Welch segment is
 * broadband: the window does not taper an edge in the middle of the segment).
 */
function generator(bench: Bench, fault: Fault, seed: number, onset: number, endSeconds: number, ramp = 0): Generator {
  const floor = floorComponents(bench, seed);
  const faults = faultComponents(bench, fault, onset / bench.sampleRate, endSeconds, seed);
  const selfGated = fault.kind === 'band-rise';
  // Gated faults stop at `endSeconds` too (faultSeconds), so a fault's end can be measured like its onset.
  const ends = Number.isFinite(endSeconds) ? Math.round(endSeconds * bench.sampleRate) - onset : Infinity;
  const until = Math.min(fault.kind === 'overload' ? Math.round(fault.seconds * bench.sampleRate) : Infinity, ends);
  const fullScale = bench.fullScale ?? Infinity;
  const scratch = new Float64Array(BLOCK);
  return {
    info: {
      sampleRate: bench.sampleRate,
      channels: [{ name: 'ch0', unit: 'V', scale: 1, fullScaleCounts: fullScale }],
      source: { kind: 'simulator', label: `detection bench seed ${seed}` },
      firstSample: 0,
      startWallTime: '2026-01-01T00:00:00.000Z',
    },
    next(out, first, frames) {
      out.fill(0, 0, frames);
      for (const c of floor) c.addTo(out, 0, frames);
      for (const c of faults) {
        if (selfGated) {
          c.addTo(out, 0, frames);
          continue;
        }
        scratch.fill(0, 0, frames);
        c.addTo(scratch, 0, frames);
        for (let i = 0; i < frames; i++) {
          const age = first + i - onset;
          if (age < 0 || age >= until) continue;
          out[i] += age >= ramp ? scratch[i] : scratch[i] * 0.5 * (1 - Math.cos((Math.PI * age) / ramp));
        }
      }
      if (fullScale < Infinity)
        for (let i = 0; i < frames; i++) out[i] = Math.max(-fullScale, Math.min(fullScale, out[i]));
    },
  };
}

/** A baseline from `seconds` of quiet floor (its own seed), mean-averaged over the whole span. */
export function captureQuietBaseline(bench: Bench, seconds: number, seed: number): BaselineFile {
  const g = generator(bench, { kind: 'none' }, seed, Infinity, seconds);
  const total = Math.round(seconds * bench.sampleRate);
  const lobe = windowMainLobeHalfWidth(bench.analysis.window);
  const cap = new BaselineCapture({
    settings: { sampleRate: bench.sampleRate, ...bench.analysis, window: makeWindow(bench.analysis.window, 64).name },
    channels: [{ name: 'ch0', unit: 'V' }],
    firstSample: 0,
    samples: total,
    bands: defaultBands(bench.sampleRate, bench.analysis.segment, lobe),
    source: `quiet bench seed ${seed}`,
  });
  const buf = new Float64Array(BLOCK);
  for (let first = 0; first < total; first += BLOCK) {
    const n = Math.min(BLOCK, total - first);
    g.next(buf, first, n);
    cap.push({ firstSample: first, frames: n, data: [buf] });
  }
  return cap.result('2026-01-01T00:00:00.000Z');
}

export interface RunResult {
  events: FloorlineEvent[];
  snapshots: number;
  samples: number;
  /** The detectors' readings after the last snapshot. */
  status?: DetectorStatus[];
}

/** Runs the pipeline with the detectors over `seconds` of floor + fault (switched on at onsetSeconds). */
export function runScenario(o: {
  bench: Bench;
  baseline: BaselineFile;
  rules?: RulesConfig;
  fault: Fault;
  onsetSeconds: number;
  /** Fade-in of the fault, s (default 0: switched on abruptly). */
  rampSeconds?: number;
  /** How long a band-rise fault lasts, s (default: to the end of the run). */
  faultSeconds?: number;
  seconds: number;
  seed: number;
  /** Access to the detector hook before the run (acknowledge/shelve tests). */
  onHook?: (hook: AlarmHook) => void;
}): RunResult {
  const { bench } = o;
  const onset = Math.round(o.onsetSeconds * bench.sampleRate);
  const total = Math.round(o.seconds * bench.sampleRate);
  const faultEnd = o.faultSeconds !== undefined ? o.onsetSeconds + o.faultSeconds : o.seconds + 1;
  const g = generator(bench, o.fault, o.seed, onset, faultEnd, Math.round((o.rampSeconds ?? 0) * bench.sampleRate));
  const p = new Pipeline({ analysis: bench.analysis, averaging: bench.averaging, mode: 'lossless' });
  const hook = new AlarmHook({ baseline: o.baseline, rules: o.rules });
  o.onHook?.(hook);
  p.addDetector(hook);
  const events: FloorlineEvent[] = [];
  p.on('event', (e) => events.push(e));
  let snapshots = 0;
  p.on('snapshot', () => snapshots++);
  p.info(g.info);
  const buf = new Float64Array(BLOCK);
  for (let first = 0; first < total; first += BLOCK) {
    const n = Math.min(BLOCK, total - first);
    g.next(buf, first, n);
    p.block({ firstSample: first, frames: n, data: [buf] });
  }
  p.end();
  return { events, snapshots, samples: total, status: hook.detectors?.status() };
}

/** First raised alarm of `rule` at or after the onset, as latency in seconds; undefined if none. */
export function detectionLatency(
  events: FloorlineEvent[],
  rule: string,
  onsetSeconds: number,
  sampleRate: number,
): number | undefined {
  const e = events.find(
    (x) => x.kind === 'alarm' && x.rule === rule && x.state === 'raised' && x.sample >= onsetSeconds * sampleRate,
  );
  return e ? e.sample / sampleRate - onsetSeconds : undefined;
}
