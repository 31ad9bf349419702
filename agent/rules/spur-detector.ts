// New narrowband lines on one channel: lines above the local floor by max(margin, χ² bound) that also stand that far
// above the baseline's density at the same bin (so lines already in the baseline are not reported). Each line is
// tracked by bin with its own alarm state; lines at k × mains are reported under the mains rule.
import { AlarmLife } from '../../dsp/detection/alarm-life.ts';
import { AlarmState, AlarmTransition } from '../../dsp/detection/alarm-state.ts';
import { MainsClassifier } from '../../dsp/detection/mains.ts';
import { SpurFinder } from '../../dsp/detection/spur-finder.ts';
import { chi2MeanMedian, conservativeAverages, lineThresholdRatio } from '../../dsp/detection/threshold.ts';
import { lineAboveFloor } from '../../dsp/tone.ts';
import type { FloorlineEvent } from '../../protocol/events.ts';
import { formatSi } from '../../protocol/si.ts';
import { makeEvent, round, roundDb } from './event-factory.ts';
import type { IncidentBook, Member } from './incidents.ts';
import type { RecentView } from './types.ts';
import { timingInSamples, type RulesConfig } from './rules.ts';
import type { AlarmTiming } from '../../dsp/detection/alarm-state.ts';
import { powerRatioDb } from '../../dsp/units.ts';

interface TrackedLine {
  bin: number;
  frequency: number;
  amplitude: number;
  heightDb: number;
  harmonic: number;
  /** Fundamental the harmonic order was found against (0 when not mains). */
  fundamental: number;
  /** Frequency announced when raised: repeats and the clear carry it, so a log reader can pair them. */
  announcedFrequency: number;
  /** First clipped sample of the overload this line was first seen under, else −1. */
  overloadFrom: number;
  firstSeen: number;
  lastSeen: number;
  state: AlarmState;
  life: AlarmLife;
  /** Its incident membership while raised. */
  member?: Member;
}

/** At most this many lines are tracked per channel (strongest win); a named limit keeps memory bounded. */
export const MAX_TRACKED_LINES = 64;
/** Farthest a line's leakage skirt is masked from the band rules, bins either side of its lobe. */
export const MAX_SKIRT_BINS = 64;

export class SpurDetector {
  readonly finder: SpurFinder;
  readonly mains: MainsClassifier;
  readonly tracked: TrackedLine[] = [];
  /** Bins inside the lobes of tracked new lines, after the last onSpectrum (band rules leave them out). */
  readonly lineMask: Uint8Array;
  /** Per found line: 1 when it may count as mains evidence (see onSpectrum). */
  private readonly evidence = new Uint8Array(MAX_TRACKED_LINES);
  /** Lines the finder found in the last spectrum (its line* arrays): the coherent rule's candidates. */
  found = 0;
  /** New lines start shelved until this sample (see Detectors.shelve). */
  shelvedUntil = -1;
  private readonly timing: AlarmTiming;
  private readonly marginRatio: number;
  private cachedK = -1;
  private ratio = 0;
  private medianToMean = 1;
  private cachedRecentK = -1;
  private recentMedianToMean = 1;

  constructor(
    readonly channel: string,
    frequencies: Float64Array,
    private readonly binHz: number,
    mainLobeHalfWidth: number,
    /** leakageEnvelope(window, MAX_SKIRT_BINS), shared by the channels. */
    private readonly leakage: Float64Array,
    private readonly baselinePsd: Float64Array,
    private readonly rules: RulesConfig,
    private readonly sampleRate: number,
    private readonly unit: string,
    private readonly book: IncidentBook,
  ) {
    this.finder = new SpurFinder({
      frequencies,
      binHz,
      mainLobeHalfWidth,
      maxLines: MAX_TRACKED_LINES,
      floorHalfWidth: rules.spur.floorHalfWidth > 0 ? rules.spur.floorHalfWidth : undefined,
    });
    this.mains = new MainsClassifier(
      { setting: rules.mains.frequency, binHz, maxHarmonic: rules.mains.maxHarmonic },
      MAX_TRACKED_LINES,
    );
    this.lineMask = new Uint8Array(frequencies.length);
    this.timing = timingInSamples(rules.spur, sampleRate);
    this.marginRatio = 10 ** (rules.spur.marginDb / 10);
  }

  /** Ratio over the local median a noise bin exceeds with probability α/bins (Bonferroni over the bins searched). */
  thresholdRatio(liveK: number): number {
    const k = conservativeAverages(liveK);
    if (k !== this.cachedK) {
      this.ratio = lineThresholdRatio(k, this.rules.spur.alpha, this.finder.bins, this.marginRatio);
      this.medianToMean = chi2MeanMedian(2 * k);
      this.cachedK = k;
    }
    return this.ratio;
  }

  /**
   * `overloadFrom` ≥ 0: the average still holds segments with clipped samples from that sample on, so new alarms are
   * held (see Detectors) and lines first seen now are marked as seen during the overload.
   */
  onSpectrum(
    psd: Float64Array,
    liveK: number,
    recent: RecentView,
    sample: number,
    wallTime: string,
    out: FloorlineEvent[],
    overloadFrom = -1,
  ): void {
    this.found = 0;
    if (!(liveK > 0)) return;
    const ratio = this.thresholdRatio(liveK);
    const thresholdDb = powerRatioDb(ratio);
    const f = this.finder;
    const n = f.find(psd, ratio, this.medianToMean);
    this.found = n;
    const rk = conservativeAverages(recent.equivalentAverages);
    if (rk !== this.cachedRecentK && rk > 0) {
      this.recentMedianToMean = chi2MeanMedian(2 * rk);
      this.cachedRecentK = rk;
    }
    const lobe = f.lobe;
    // Overload products (lines first seen under an overload, or any line while held) are no evidence of the grid.
    const evidence = this.evidence;
    for (let i = 0; i < n; i++) {
      const product =
        overloadFrom >= 0 || this.tracked.some((x) => x.overloadFrom >= 0 && Math.abs(x.bin - f.lineBin[i]) <= lobe);
      evidence[i] = product ? 0 : 1;
    }
    this.mains.classify(f.lineFrequency, f.lineAmplitude, n, evidence);
    const base = this.baselinePsd;
    for (let i = 0; i < n; i++) {
      const k = f.lineBin[i];
      if (!(psd[k] > ratio * base[k])) continue; // present in the baseline already
      let t = this.tracked.find((x) => Math.abs(x.bin - k) <= lobe);
      if (!t) {
        if (this.tracked.length >= MAX_TRACKED_LINES) continue;
        t = {
          bin: k,
          frequency: 0,
          amplitude: 0,
          heightDb: 0,
          harmonic: 0,
          fundamental: 0,
          announcedFrequency: 0,
          overloadFrom,
          firstSeen: sample,
          lastSeen: sample,
          state: new AlarmState(this.timing),
          life: new AlarmLife(),
        };
        if (this.shelvedUntil > sample) t.state.shelve(this.shelvedUntil);
        this.tracked.push(t);
      }
      t.bin = k;
      t.frequency = f.lineFrequency[i];
      t.amplitude = f.lineAmplitude[i];
      t.heightDb = f.lineHeightDb[i];
      if (!t.state.active) {
        t.harmonic = this.mains.harmonic[i];
        t.fundamental = t.harmonic > 0 ? this.mains.fundamental : 0;
      }
      t.lastSeen = sample;
    }
    this.lineMask.fill(0);
    for (let j = this.tracked.length - 1; j >= 0; j--) {
      const t = this.tracked[j];
      // Level: the line's height over both the local floor and the baseline, best bin within the lobe.
      const floor = f.floorAt(psd, t.bin);
      let level = -Infinity;
      for (let b = Math.max(0, t.bin - lobe); b <= Math.min(psd.length - 1, t.bin + lobe); b++) {
        const h = powerRatioDb(Math.min(psd[b] / floor, psd[b] / base[b]));
        if (h > level) level = h;
      }
      if (Number.isNaN(level)) level = -Infinity;
      const r = this.recentLine(recent.psd, t.bin);
      if (overloadFrom >= 0) t.state.hold(sample + 1);
      t.life.observe(sample, r.level, thresholdDb - this.timing.deadband, t.state.active);
      const tr = t.state.update(sample, level, thresholdDb, r.level);
      if (tr === AlarmTransition.Raised) {
        t.life.raised(sample);
        t.member = this.book.join(
          {
            rule: t.harmonic > 0 ? 'mains' : 'spur',
            channel: this.channel,
            frequency: round(t.frequency, 7),
            ...(t.harmonic > 0 ? { harmonic: t.harmonic } : {}),
            overloadFrom: t.overloadFrom,
            state: t.state,
            peakNow: () =>
              t.life.peakSample >= 0
                ? {
                    levelDb: roundDb(t.life.peakLevel),
                    amplitude: round(t.life.peakAmplitude),
                    sample: t.life.peakSample,
                  }
                : undefined,
          },
          { sample, t: sample / this.sampleRate, wallTime },
        );
      }
      if (t.state.raised) t.life.track(sample, r.level, r.amplitude);
      if (tr !== AlarmTransition.None)
        out.push(
          this.event(
            t,
            tr,
            sample,
            wallTime,
            tr === AlarmTransition.Cleared ? r.level : level,
            thresholdDb,
            r.amplitude,
          ),
        );
      if (t.state.raised && t.life.settlesNow(sample - recent.spanSamples + 1))
        out.push(this.settledEvent(t, sample, wallTime, r, thresholdDb));
      if (tr === AlarmTransition.Cleared) t.life.cleared();
      if (!t.state.active && t.lastSeen < sample) {
        this.tracked.splice(j, 1);
        continue;
      }
      this.maskLine(t.bin, psd, floor);
    }
  }

  /**
   * Flags the line's main lobe and its leakage skirt: every bin d away where the line's worst-case leakage
   * (peak · L(d), dsp/detection/leakage.ts) exceeds a tenth of the reference floor (baseline, else local floor), up to
   * MAX_SKIRT_BINS either side. A strong line's sidelobes (Hann: −31 dB, falling 18 dB/octave) would otherwise
   * read as a floor rise in its band.
   */
  private maskLine(bin: number, psd: Float64Array, floor: number): void {
    const mask = this.lineMask;
    const base = this.baselinePsd;
    const leak = this.leakage;
    const last = psd.length - 1;
    const peak = psd[bin];
    for (let d = 0; d <= MAX_SKIRT_BINS; d++) {
      const lo = bin - d;
      const hi = bin + d;
      let any = false;
      if (lo >= 0) {
        const ref = base[lo] > 0 ? base[lo] : floor;
        if (d <= this.finder.lobe || peak * leak[d] > 0.1 * ref) {
          mask[lo] = 1;
          any = true;
        }
      }
      if (hi <= last) {
        const ref = base[hi] > 0 ? base[hi] : floor;
        if (d <= this.finder.lobe || peak * leak[d] > 0.1 * ref) {
          mask[hi] = 1;
          any = true;
        }
      }
      if (!any) break;
    }
  }

  /**
   * The line in the recent estimate: its level as the rule measures it (height over the local floor and the
   * baseline, best bin within the lobe), and its floor-subtracted amplitude and frequency (dsp/tone.ts).
   */
  private recentLine(psd: Float64Array, bin: number): { level: number; amplitude: number; frequency: number } {
    const f = this.finder;
    const lobe = f.lobe;
    const base = this.baselinePsd;
    const floor = f.floorAt(psd, bin);
    let level = -Infinity;
    let peak = bin;
    for (let b = Math.max(0, bin - lobe); b <= Math.min(psd.length - 1, bin + lobe); b++) {
      const h = powerRatioDb(Math.min(psd[b] / floor, psd[b] / base[b]));
      if (h > level) level = h;
      if (psd[b] > psd[peak]) peak = b;
    }
    if (Number.isNaN(level)) level = -Infinity;
    const line = lineAboveFloor(psd, this.binHz, lobe, peak, floor / this.recentMedianToMean);
    return { level, amplitude: line.rms, frequency: line.frequency };
  }

  private describe(t: TrackedLine): string {
    const f = t.announcedFrequency;
    return t.harmonic > 0
      ? `mains harmonic ${t.harmonic} of ${t.fundamental.toFixed(2)} Hz at ${f.toFixed(2)} Hz`
      : `new line at ${f.toFixed(2)} Hz`;
  }

  private settledEvent(
    t: TrackedLine,
    sample: number,
    wallTime: string,
    r: { level: number; amplitude: number; frequency: number },
    thresholdDb: number,
  ): FloorlineEvent {
    const levelDb = roundDb(r.level);
    const amplitude = round(r.amplitude);
    const e = makeEvent(
      t.harmonic > 0 ? 'mains' : 'spur',
      'settled',
      this.channel,
      sample,
      this.sampleRate,
      wallTime,
      `${this.channel} ${this.describe(t)} settled at ${formatSi(amplitude, this.unit)} rms, ${levelDb} dB over the floor, at ${r.frequency.toFixed(2)} Hz (the recent estimate holds only samples after the onset)`,
      {
        frequency: round(r.frequency, 7),
        amplitude,
        levelDb,
        thresholdDb: round(thresholdDb),
        ...(t.harmonic > 0 ? { harmonic: t.harmonic } : {}),
      },
    );
    if (t.member) this.book.stamp(e, t.member);
    return e;
  }

  private event(
    t: TrackedLine,
    tr: AlarmTransition,
    sample: number,
    wallTime: string,
    level: number,
    thresholdDb: number,
    recentAmplitude: number,
  ): FloorlineEvent {
    const isMains = t.harmonic > 0;
    const raised = tr !== AlarmTransition.Cleared;
    const m = this.mains;
    if (tr === AlarmTransition.Raised) t.announcedFrequency = t.frequency;
    const f = t.announcedFrequency;
    const what = this.describe(t);
    const rms = (x: number) => `${formatSi(x, this.unit)} rms`;
    const totals = isMains && m.measured ? `; mains total ${rms(m.total)}, odd ${rms(m.odd)}, even ${rms(m.even)}` : '';
    const overload =
      t.overloadFrom >= 0
        ? `; first seen while the average held segments with clipped samples (from sample ${t.overloadFrom}): likely an overload product`
        : '';
    const levelDb = roundDb(level);
    const amplitude = round(raised ? t.amplitude : recentAmplitude);
    const life = t.life;
    const peakLevelDb = roundDb(life.peakLevel);
    const peakAmplitude = round(life.peakAmplitude);
    const durationSeconds = round((sample - life.raisedAt) / this.sampleRate, 6);
    const detail = raised
      ? `${this.channel} ${what}, ${rms(amplitude)}, ${levelDb} dB over the floor (first seen at sample ${t.firstSeen}; still rising while the average fills, see the settled event)${totals}${overload}`
      : `${this.channel} ${what} gone, ${levelDb} dB over the floor in the recent estimate (last seen at sample ${t.lastSeen}, last at ${t.frequency.toFixed(2)} Hz); peak ${rms(peakAmplitude)}, ${peakLevelDb} dB, after ${durationSeconds} s`;
    const e = makeEvent(
      isMains ? 'mains' : 'spur',
      raised ? 'raised' : 'cleared',
      this.channel,
      sample,
      this.sampleRate,
      wallTime,
      detail,
      {
        frequency: round(f, 7),
        amplitude,
        levelDb,
        thresholdDb: round(thresholdDb),
        ...(isMains ? { harmonic: t.harmonic } : {}),
        ...(raised ? {} : { peakLevelDb, peakAmplitude, peakSample: life.peakSample, durationSeconds }),
      },
    );
    if (t.member) {
      this.book.stamp(e, t.member);
      if (!raised) {
        this.book.leave(
          t.member,
          { sample, t: sample / this.sampleRate, wallTime },
          { levelDb: peakLevelDb, amplitude: peakAmplitude, sample: life.peakSample },
        );
        t.member = undefined;
      }
    }
    return e;
  }
}
