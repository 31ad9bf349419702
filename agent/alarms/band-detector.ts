// Band rise rule for one channel: live band power over the baseline's, against max(margin, F bound).
import { AlarmState, AlarmTransition } from '../../dsp/alarms/alarm-state.ts';
import { BandCompare, type BandSpec } from '../../dsp/alarms/band-compare.ts';
import type { FloorlineEvent } from '../core/events.ts';
import { makeEvent, round } from './event-factory.ts';
import { timingInSamples, type RulesConfig } from './rules.ts';

export class BandDetector {
  readonly compare: BandCompare;
  private readonly states: AlarmState[];

  constructor(
    readonly channel: string,
    bands: BandSpec[],
    baselinePsd: Float64Array,
    baselineK: number,
    binHz: number,
    correlation: Float64Array,
    rules: RulesConfig,
    private readonly sampleRate: number,
  ) {
    this.compare = new BandCompare({
      binHz, bands, baselinePsd, baselineEquivalentAverages: baselineK, correlation,
      marginDb: rules.band.marginDb, alpha: rules.band.alpha,
    });
    const timing = timingInSamples(rules.band, sampleRate);
    this.states = bands.map(() => new AlarmState(timing));
  }

  get bands(): readonly BandSpec[] {
    return this.compare.bands;
  }

  state(i: number): AlarmState {
    return this.states[i];
  }

  /** `exclude` flags bins of narrowband lines reported by the spur/mains rules (left out of the floor). */
  onSpectrum(psd: Float64Array, liveK: number, sample: number, wallTime: string, out: FloorlineEvent[], exclude?: Uint8Array): void {
    if (!(liveK > 0)) return;
    const c = this.compare;
    c.evaluate(psd, liveK, exclude);
    for (let b = 0; b < this.states.length; b++) {
      const level0 = c.levelDb[b];
      const tr = this.states[b].update(sample, Number.isNaN(level0) ? -Infinity : level0, c.thresholdDb[b]);
      if (tr === AlarmTransition.None) continue;
      const { low, high } = c.bands[b];
      const level = c.levelDb[b];
      const raised = tr !== AlarmTransition.Cleared;
      const detail = raised
        ? `${this.channel} ${low.toPrecision(4)}–${high.toPrecision(4)} Hz floor ${level.toFixed(2)} dB above baseline (threshold ${c.thresholdDb[b].toFixed(2)} dB)${tr === AlarmTransition.Repeated ? ', still active' : ''}`
        : `${this.channel} ${low.toPrecision(4)}–${high.toPrecision(4)} Hz floor back to ${level.toFixed(2)} dB of baseline`;
      out.push(
        makeEvent('band-rise', raised ? 'raised' : 'cleared', this.channel, sample, this.sampleRate, wallTime, detail, {
          band: [round(low, 6), round(high, 6)], levelDb: round(level), thresholdDb: round(c.thresholdDb[b]),
        }),
      );
    }
  }
}
