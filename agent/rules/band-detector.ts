// Band rise rule for one channel: live band power over the baseline's, against max(margin, F bound).
import { AlarmState, AlarmTransition } from '../../dsp/detection/alarm-state.ts';
import { BandCompare, type BandSpec } from '../../dsp/detection/band-compare.ts';
import type { FloorlineEvent } from '../../protocol/events.ts';
import { makeEvent, round } from './event-factory.ts';
import { timingInSamples, type RulesConfig } from './rules.ts';

export class BandDetector {
  readonly compare: BandCompare;
  private readonly states: AlarmState[];
  /** First clipped sample of the overload a band's rise began under (−1: none), for the event detail. */
  private readonly riseUnderOverload: number[];
  /** Whether each band was covered by lines at the last spectrum (an info event marks each change). */
  private readonly covered: boolean[];

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
    this.riseUnderOverload = bands.map(() => -1);
    this.covered = bands.map(() => false);
  }

  get bands(): readonly BandSpec[] {
    return this.compare.bands;
  }

  state(i: number): AlarmState {
    return this.states[i];
  }

  /**
   * `exclude` flags bins of narrowband lines reported by the spur/mains rules (left out of the floor).
   * `overloadFrom` ≥ 0: the average still holds clipped segments from that sample on; new rises are held.
   * A band whose every bin lies under new lines cannot be judged: its state is held as it was (no raise, no clear)
   * and an info event says so when that starts and ends; status shows its all-bins level.
   */
  onSpectrum(psd: Float64Array, liveK: number, sample: number, wallTime: string, out: FloorlineEvent[], exclude?: Uint8Array, overloadFrom = -1): void {
    if (!(liveK > 0)) return;
    const c = this.compare;
    c.evaluate(psd, liveK, exclude);
    for (let b = 0; b < this.states.length; b++) {
      const level0 = c.levelDb[b];
      const state = this.states[b];
      const above = level0 > c.thresholdDb[b];
      const covered = c.coveredByLines[b] === 1;
      if (covered !== this.covered[b]) {
        this.covered[b] = covered;
        const { low, high } = c.bands[b];
        const band = `${this.channel} ${low.toPrecision(4)}–${high.toPrecision(4)} Hz`;
        out.push(makeEvent('band-rise', covered ? 'raised' : 'cleared', this.channel, sample, this.sampleRate, wallTime,
          covered
            ? `${band} not judged: new lines and their skirts cover all its bins (all-bin level ${level0.toFixed(2)} dB); the band's alarm state is held until floor bins show again`
            : `${band} judged again: floor bins clear of lines`,
          { band: [round(low, 6), round(high, 6)], levelDb: round(level0), thresholdDb: round(c.thresholdDb[b]) }, 'info'));
      }
      if (covered) state.hold(sample + 1);
      if (overloadFrom >= 0) {
        state.hold(sample + 1);
        if (above && !state.raised && this.riseUnderOverload[b] < 0) this.riseUnderOverload[b] = overloadFrom;
      } else if (!above && !state.active) this.riseUnderOverload[b] = -1;
      const tr = state.update(sample, Number.isNaN(level0) ? -Infinity : level0, c.thresholdDb[b]);
      if (tr === AlarmTransition.None) continue;
      const { low, high } = c.bands[b];
      const level = c.levelDb[b];
      const raised = tr !== AlarmTransition.Cleared;
      const overload = raised && this.riseUnderOverload[b] >= 0
        ? `; the rise began while the average held segments with clipped samples (from sample ${this.riseUnderOverload[b]})`
        : '';
      const detail = raised
        ? `${this.channel} ${low.toPrecision(4)}–${high.toPrecision(4)} Hz floor ${level.toFixed(2)} dB above baseline (threshold ${c.thresholdDb[b].toFixed(2)} dB)${tr === AlarmTransition.Repeated ? ', still active' : ''}${overload}`
        : `${this.channel} ${low.toPrecision(4)}–${high.toPrecision(4)} Hz floor back to ${level.toFixed(2)} dB of baseline`;
      if (!raised) this.riseUnderOverload[b] = -1;
      out.push(
        makeEvent('band-rise', raised ? 'raised' : 'cleared', this.channel, sample, this.sampleRate, wallTime, detail, {
          band: [round(low, 6), round(high, 6)], levelDb: round(level), thresholdDb: round(c.thresholdDb[b]),
        }),
      );
    }
  }
}
