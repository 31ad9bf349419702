// Plays a scenario: the samples of every channel, block by block in sample time, as volts and as the counts a
// converter would report. Same scenario and seed → the same samples, bit for bit, whatever consumes them.
import { randomBytes } from 'node:crypto';
import { BandStep } from '../../dsp/synth/band-step.ts';
import { deriveSeed, type SynthComponent } from '../../dsp/synth/component.ts';
import { FlickerNoise } from '../../dsp/synth/flicker-noise.ts';
import { MainsPickup } from '../../dsp/synth/mains.ts';
import { Overload } from '../../dsp/synth/overload.ts';
import { quantise } from '../../dsp/synth/quantise.ts';
import { Tone } from '../../dsp/synth/tone.ts';
import { WhiteNoise } from '../../dsp/synth/white-noise.ts';
import type { BoardDescriptor } from '../framing/descriptor.ts';
import { framesPerFrame, type ChannelSpec, type Scenario, type SignalSpec } from './scenario.ts';
import { GatedComponent } from './gate.ts';

/** Tones and mains with start/end are switched on only then (agent/sim/gate.ts). */
function gated(s: SignalSpec, comp: SynthComponent, rate: number): SynthComponent {
  if ((s.kind !== 'tone' && s.kind !== 'mains') || (s.start === undefined && s.end === undefined)) return comp;
  return new GatedComponent(comp, s.start ?? 0, s.end ?? Infinity, rate);
}

function makeComponent(s: SignalSpec, ch: ChannelSpec, rate: number, seed: number): SynthComponent {
  switch (s.kind) {
    case 'white':
      return new WhiteNoise({ density: s.density, sampleRate: rate, seed });
    case 'flicker':
      return new FlickerNoise({
        density: s.density,
        corner: s.corner,
        sampleRate: rate,
        seed,
        ...(s.lowest ? { lowest: s.lowest } : {}),
      });
    case 'tone':
      return new Tone({ frequency: s.frequency, rms: s.rms, sampleRate: rate, phaseDeg: s.phase ?? 0 });
    case 'mains':
      return new MainsPickup({
        fundamental: s.fundamental,
        harmonics: s.harmonics,
        sampleRate: rate,
        driftSpan: s.drift?.span ?? 0,
        driftPeriod: s.drift?.period ?? 60,
      });
    case 'band-step':
      return new BandStep({
        density: s.density,
        low: s.low,
        high: s.high,
        start: s.start,
        end: s.end,
        sampleRate: rate,
        seed,
      });
    case 'overload':
      return new Overload({
        start: s.start,
        end: s.end,
        frequency: s.frequency,
        peak: s.overdrive * ch.fullScale * ch.perCount,
        sampleRate: rate,
      });
  }
}

export class ScenarioPlayer {
  readonly framesPerBlock: number;
  /** Per channel, the last block in volts (the quantised value: counts × perCount). */
  readonly volts: Float64Array[];
  /** Per channel, the last block in counts. */
  readonly counts: Float64Array[];
  /** Absolute index of the next sample. */
  position = 0;
  /** Samples clipped so far, per channel. */
  readonly clipped: number[];
  private readonly components: SynthComponent[][];
  private readonly analog: Float64Array;
  readonly seed: number;

  constructor(
    readonly scenario: Scenario,
    seed = scenario.seed,
  ) {
    this.seed = seed;
    this.framesPerBlock = framesPerFrame(scenario);
    const n = this.framesPerBlock;
    this.analog = new Float64Array(n);
    this.volts = scenario.channels.map(() => new Float64Array(n));
    this.counts = scenario.channels.map(() => new Float64Array(n));
    this.clipped = scenario.channels.map(() => 0);
    // Each signal draws from its own stream, so adding one signal leaves the others' samples unchanged.
    this.components = scenario.channels.map((ch, c) =>
      ch.signals.map((s, k) =>
        gated(s, makeComponent(s, ch, scenario.rate, deriveSeed(seed, 1000 * c + k)), scenario.rate),
      ),
    );
  }

  /** Generates the next `frames` (≤ framesPerBlock) instants into volts[c][0..frames) and counts[c][0..frames). */
  next(frames = this.framesPerBlock): number {
    if (!(frames >= 1 && frames <= this.framesPerBlock))
      throw new RangeError(`ScenarioPlayer.next: frames must be 1..${this.framesPerBlock}`);
    const chans = this.scenario.channels;
    const analog = this.analog;
    const integer = this.scenario.format !== 'float32';
    for (let c = 0; c < chans.length; c++) {
      analog.fill(0, 0, frames);
      for (const comp of this.components[c]) comp.addTo(analog, 0, frames);
      const ch = chans[c];
      const counts = this.counts[c];
      const volts = this.volts[c];
      this.clipped[c] += quantise(analog, counts, frames, ch.perCount, ch.fullScale, integer);
      const pc = ch.perCount;
      for (let i = 0; i < frames; i++) volts[i] = counts[i] * pc;
    }
    const first = this.position;
    this.position += frames;
    return first;
  }

  /** Differs at every run, like a board's power-up: the host tells a restart from a replug by it. */
  private readonly boot = randomBytes(4).toString('hex');

  /** The board's descriptor at its current sample clock. */
  descriptor(): BoardDescriptor {
    const s = this.scenario;
    return {
      rate: s.rate,
      format: s.format,
      board: s.board,
      firmware: s.firmware,
      boot: this.boot,
      clock: this.position % 2 ** 32,
      channels: s.channels.map((c) => ({ name: c.name, unit: c.unit, perCount: c.perCount, fullScale: c.fullScale })),
    };
  }
}
