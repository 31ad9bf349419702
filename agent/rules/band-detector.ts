// Band rise rule for one channel: live band power over the baseline's, against max(margin, F bound).
import { AlarmLife } from '../../dsp/detection/alarm-life.ts';
import { AlarmState, AlarmTransition } from '../../dsp/detection/alarm-state.ts';
import { BandCompare, type BandSpec } from '../../dsp/detection/band-compare.ts';
import type { FloorlineEvent } from '../../protocol/events.ts';
import { makeEvent, round, roundDb } from './event-factory.ts';
import type { IncidentBook, Member } from './incidents.ts';
import type { RecentView } from './types.ts';
import { timingInSamples, type RulesConfig } from './rules.ts';

export class BandDetector {
  readonly compare: BandCompare;
  /** The same comparison on the recent estimate: it judges clears, settled levels and peaks. */
  readonly recentCompare: BandCompare;
  private readonly states: AlarmState[];
  private readonly lives: AlarmLife[];
  private readonly members: (Member | undefined)[];
  private readonly deadband: number;
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
    private readonly book: IncidentBook,
  ) {
    const spec = {
      binHz,
      bands,
      baselinePsd,
      baselineEquivalentAverages: baselineK,
      correlation,
      marginDb: rules.band.marginDb,
      alpha: rules.band.alpha,
    };
    this.compare = new BandCompare(spec);
    this.recentCompare = new BandCompare(spec);
    const timing = timingInSamples(rules.band, sampleRate);
    this.deadband = timing.deadband;
    this.states = bands.map(() => new AlarmState(timing));
    this.lives = bands.map(() => new AlarmLife());
    this.members = bands.map(() => undefined);
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
  onSpectrum(
    psd: Float64Array,
    liveK: number,
    recent: RecentView,
    sample: number,
    wallTime: string,
    out: FloorlineEvent[],
    exclude?: Uint8Array,
    overloadFrom = -1,
  ): void {
    if (!(liveK > 0)) return;
    const c = this.compare;
    c.evaluate(psd, liveK, exclude);
    const rc = this.recentCompare;
    rc.evaluate(recent.psd, recent.equivalentAverages > 0 ? recent.equivalentAverages : liveK, exclude);
    const stamp = { sample, t: sample / this.sampleRate, wallTime };
    for (let b = 0; b < this.states.length; b++) {
      const level0 = c.levelDb[b];
      const state = this.states[b];
      const above = level0 > c.thresholdDb[b];
      const covered = c.coveredByLines[b] === 1;
      if (covered !== this.covered[b]) {
        this.covered[b] = covered;
        const { low, high } = c.bands[b];
        const band = `${this.channel} ${low.toPrecision(4)}–${high.toPrecision(4)} Hz`;
        out.push(
          makeEvent(
            'band-rise',
            covered ? 'raised' : 'cleared',
            this.channel,
            sample,
            this.sampleRate,
            wallTime,
            covered
              ? `${band} not judged: new lines and their skirts cover all its bins (all-bin level ${roundDb(level0)} dB); the band's alarm state is held until floor bins show again`
              : `${band} judged again: floor bins clear of lines`,
            { band: [round(low, 6), round(high, 6)], levelDb: roundDb(level0), thresholdDb: roundDb(c.thresholdDb[b]) },
            'info',
          ),
        );
      }
      if (covered) state.hold(sample + 1);
      if (overloadFrom >= 0) {
        state.hold(sample + 1);
        if (above && !state.raised && this.riseUnderOverload[b] < 0) this.riseUnderOverload[b] = overloadFrom;
      } else if (!above && !state.active) this.riseUnderOverload[b] = -1;
      const recentLevel = Number.isNaN(rc.levelDb[b]) ? -Infinity : rc.levelDb[b];
      const life = this.lives[b];
      life.observe(sample, recentLevel, c.thresholdDb[b] - this.deadband, state.active);
      const tr = state.update(sample, Number.isNaN(level0) ? -Infinity : level0, c.thresholdDb[b], recentLevel);
      const { low, high } = c.bands[b];
      const band: [number, number] = [round(low, 6), round(high, 6)];
      const name = `${this.channel} ${low.toPrecision(4)}–${high.toPrecision(4)} Hz`;
      if (tr === AlarmTransition.Raised) {
        life.raised(sample);
        this.members[b] = this.book.join(
          {
            rule: 'band-rise',
            channel: this.channel,
            band,
            overloadFrom: this.riseUnderOverload[b],
            state,
            peakNow: () =>
              life.peakSample >= 0 ? { levelDb: roundDb(life.peakLevel), sample: life.peakSample } : undefined,
          },
          stamp,
        );
      }
      if (state.raised) life.track(sample, recentLevel);
      const member = this.members[b];
      if (tr !== AlarmTransition.None) {
        const raised = tr !== AlarmTransition.Cleared;
        // The raise quotes the long estimate at its first crossing; the clear the recent one that judged it.
        const levelDb = roundDb(raised ? c.levelDb[b] : recentLevel);
        const thresholdDb = roundDb(c.thresholdDb[b]);
        const overload =
          raised && this.riseUnderOverload[b] >= 0
            ? `; the rise began while the average held segments with clipped samples (from sample ${this.riseUnderOverload[b]})`
            : '';
        const peakLevelDb = roundDb(life.peakLevel);
        const durationSeconds = round((sample - life.raisedAt) / this.sampleRate, 6);
        const detail = raised
          ? `${name} floor ${levelDb} dB above baseline (threshold ${thresholdDb} dB)${tr === AlarmTransition.Repeated ? ', still active' : ''}${overload}`
          : `${name} floor back to ${levelDb} dB of baseline in the recent estimate; peak ${peakLevelDb} dB, after ${durationSeconds} s`;
        if (!raised) this.riseUnderOverload[b] = -1;
        const e = makeEvent(
          'band-rise',
          raised ? 'raised' : 'cleared',
          this.channel,
          sample,
          this.sampleRate,
          wallTime,
          detail,
          {
            band,
            levelDb,
            thresholdDb,
            ...(raised ? {} : { peakLevelDb, peakSample: life.peakSample, durationSeconds }),
          },
        );
        if (member) {
          this.book.stamp(e, member);
          if (!raised) {
            this.book.leave(member, stamp, { levelDb: peakLevelDb, sample: life.peakSample });
            this.members[b] = undefined;
          }
        }
        out.push(e);
      }
      if (state.raised && life.settlesNow(sample - recent.spanSamples + 1)) {
        const levelDb = roundDb(recentLevel);
        const e = makeEvent(
          'band-rise',
          'settled',
          this.channel,
          sample,
          this.sampleRate,
          wallTime,
          `${name} floor settled at ${levelDb} dB above baseline (the recent estimate holds only samples after the onset)`,
          { band, levelDb, thresholdDb: roundDb(c.thresholdDb[b]) },
        );
        if (member) this.book.stamp(e, member);
        out.push(e);
      }
      if (tr === AlarmTransition.Cleared) life.cleared();
    }
  }
}
