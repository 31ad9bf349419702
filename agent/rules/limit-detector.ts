// Limit-mask rule for one channel: the live density against an absolute ASD mask (a datasheet or test-spec limit,
// log-log interpolated, dsp/measure/limit-mask.ts). A bin of the live estimate scatters as χ²(ν)/ν around the true
// density (ν = 2·K_eq), so the rule raises only when the worst bin exceeds the mask by more than the ratio a noise
// bin at the mask would reach by chance with probability α over the bins judged (the spur rule's Bonferroni bound,
// chi2MeanUpperQuantile(α/bins, ν)). The event names the frequency of the worst excess and the margin there.
import { AlarmState, AlarmTransition } from '../../dsp/detection/alarm-state.ts';
import { chi2MeanUpperQuantile, conservativeAverages } from '../../dsp/detection/threshold.ts';
import type { FloorlineEvent } from '../../protocol/events.ts';
import { makeEvent, round } from './event-factory.ts';
import { timingInSamples, type RulesConfig } from './rules.ts';
import { powerRatioDb } from '../../dsp/units.ts';

export class LimitDetector {
  /** Level (worst bin over the mask, dB of power) and its frequency at the last spectrum. */
  levelDb = -Infinity;
  worstFrequency = NaN;
  thresholdDb = 0;
  readonly state: AlarmState;
  private readonly judged: number;
  private cachedK = -1;

  constructor(
    readonly channel: string,
    readonly unit: string,
    private readonly frequencies: Float64Array,
    /** ASD limit per bin (NaN where the mask does not reach; DC is never judged). */
    private readonly limits: Float64Array,
    private readonly rules: RulesConfig,
    private readonly sampleRate: number,
  ) {
    let n = 0;
    for (let k = 1; k < limits.length; k++) if (limits[k] > 0) n++;
    if (n === 0)
      throw new RangeError(
        `limit mask for ${channel}: no bin of the spectrum lies under the mask; give a mask that spans some of 0–${sampleRate / 2} Hz`,
      );
    this.judged = n;
    // The band rule's timings: a mask is a floor-like limit.
    this.state = new AlarmState(timingInSamples(rules.band, sampleRate));
  }

  onSpectrum(
    psd: Float64Array,
    liveK: number,
    sample: number,
    wallTime: string,
    out: FloorlineEvent[],
    overloadFrom = -1,
  ): void {
    if (!(liveK > 0)) return;
    const k = conservativeAverages(liveK);
    if (k !== this.cachedK) {
      this.thresholdDb = powerRatioDb(chi2MeanUpperQuantile(this.rules.band.alpha / this.judged, 2 * k));
      this.cachedK = k;
    }
    const lim = this.limits;
    let worst = -Infinity;
    let at = -1;
    for (let b = 1; b < psd.length; b++) {
      const l = lim[b];
      if (!(l > 0)) continue;
      const r = psd[b] / (l * l);
      if (r > worst) {
        worst = r;
        at = b;
      }
    }
    this.levelDb = powerRatioDb(worst);
    this.worstFrequency = at >= 0 ? this.frequencies[at] : NaN;
    if (overloadFrom >= 0) this.state.hold(sample + 1);
    const tr = this.state.update(sample, Number.isNaN(this.levelDb) ? -Infinity : this.levelDb, this.thresholdDb);
    if (tr === AlarmTransition.None) return;
    const raised = tr !== AlarmTransition.Cleared;
    const f = this.worstFrequency;
    const margin = -this.levelDb;
    const estimate = Math.sqrt(psd[at]);
    const detail = raised
      ? `${this.channel} above its limit mask by ${this.levelDb.toFixed(2)} dB at ${f.toFixed(2)} Hz (estimate ${estimate.toExponential(3)} ${this.unit}/√Hz against ` +
        `${lim[at].toExponential(3)} ${this.unit}/√Hz; statistical bound ${this.thresholdDb.toFixed(2)} dB)${tr === AlarmTransition.Repeated ? ', still active' : ''}`
      : `${this.channel} back under its limit mask (worst margin ${margin.toFixed(2)} dB at ${f.toFixed(2)} Hz)`;
    out.push(
      makeEvent('limit', raised ? 'raised' : 'cleared', this.channel, sample, this.sampleRate, wallTime, detail, {
        frequency: round(f, 7),
        marginDb: round(margin),
        levelDb: round(this.levelDb),
        thresholdDb: round(this.thresholdDb),
      }),
    );
  }
}
