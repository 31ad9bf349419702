// New narrowband lines on one channel: lines above the local floor by max(margin, χ² bound) that also stand that far
// above the baseline's density at the same bin (so lines already in the baseline are not reported). Each line is
// tracked by bin with its own alarm state; lines at k × mains are reported under the mains rule.
import { AlarmState, AlarmTransition } from '../../dsp/detection/alarm-state.ts';
import { MainsClassifier } from '../../dsp/detection/mains.ts';
import { SpurFinder } from '../../dsp/detection/spur-finder.ts';
import { conservativeAverages, lineThresholdRatio } from '../../dsp/detection/threshold.ts';
import type { FloorlineEvent } from '../../protocol/events.ts';
import { makeEvent, round } from './event-factory.ts';
import { timingInSamples, type RulesConfig } from './rules.ts';
import type { AlarmTiming } from '../../dsp/detection/alarm-state.ts';

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
  /** New lines start shelved until this sample (see Detectors.shelve). */
  shelvedUntil = -1;
  private readonly timing: AlarmTiming;
  private readonly marginRatio: number;
  private cachedK = -1;
  private ratio = 0;

  constructor(
    readonly channel: string,
    frequencies: Float64Array,
    binHz: number,
    mainLobeHalfWidth: number,
    /** leakageEnvelope(window, MAX_SKIRT_BINS), shared by the channels. */
    private readonly leakage: Float64Array,
    private readonly baselinePsd: Float64Array,
    private readonly rules: RulesConfig,
    private readonly sampleRate: number,
  ) {
    this.finder = new SpurFinder({
      frequencies, binHz, mainLobeHalfWidth, maxLines: MAX_TRACKED_LINES,
      floorHalfWidth: rules.spur.floorHalfWidth > 0 ? rules.spur.floorHalfWidth : undefined,
    });
    this.mains = new MainsClassifier({ setting: rules.mains.frequency, binHz, maxHarmonic: rules.mains.maxHarmonic }, MAX_TRACKED_LINES);
    this.lineMask = new Uint8Array(frequencies.length);
    this.timing = timingInSamples(rules.spur, sampleRate);
    this.marginRatio = 10 ** (rules.spur.marginDb / 10);
  }

  /** Ratio over the local median a noise bin exceeds with probability α/bins (Bonferroni over the bins searched). */
  thresholdRatio(liveK: number): number {
    const k = conservativeAverages(liveK);
    if (k !== this.cachedK) {
      this.ratio = lineThresholdRatio(k, this.rules.spur.alpha, this.finder.bins, this.marginRatio);
      this.cachedK = k;
    }
    return this.ratio;
  }

  /**
   * `overloadFrom` ≥ 0: the average still holds segments with clipped samples from that sample on, so new alarms are
   * held (see Detectors) and lines first seen now are marked as seen during the overload.
   */
  onSpectrum(psd: Float64Array, liveK: number, sample: number, wallTime: string, out: FloorlineEvent[], overloadFrom = -1): void {
    if (!(liveK > 0)) return;
    const ratio = this.thresholdRatio(liveK);
    const thresholdDb = 10 * Math.log10(ratio);
    const f = this.finder;
    const n = f.find(psd, ratio);
    const lobe = f.lobe;
    // Overload products (lines first seen under an overload, or any line while held) are no evidence of the grid.
    const evidence = this.evidence;
    for (let i = 0; i < n; i++) {
      const product = overloadFrom >= 0 || this.tracked.some((x) => x.overloadFrom >= 0 && Math.abs(x.bin - f.lineBin[i]) <= lobe);
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
          bin: k, frequency: 0, amplitude: 0, heightDb: 0, harmonic: 0, fundamental: 0, announcedFrequency: 0,
          overloadFrom, firstSeen: sample, lastSeen: sample, state: new AlarmState(this.timing),
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
        const h = 10 * Math.log10(Math.min(psd[b] / floor, psd[b] / base[b]));
        if (h > level) level = h;
      }
      if (Number.isNaN(level)) level = -Infinity;
      if (overloadFrom >= 0) t.state.hold(sample + 1);
      const tr = t.state.update(sample, level, thresholdDb);
      if (tr !== AlarmTransition.None) out.push(this.event(t, tr, sample, wallTime, level, thresholdDb));
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

  private event(t: TrackedLine, tr: AlarmTransition, sample: number, wallTime: string, level: number, thresholdDb: number): FloorlineEvent {
    const isMains = t.harmonic > 0;
    const raised = tr !== AlarmTransition.Cleared;
    const m = this.mains;
    if (tr === AlarmTransition.Raised) t.announcedFrequency = t.frequency;
    const f = t.announcedFrequency;
    const what = isMains
      ? `mains harmonic ${t.harmonic} of ${t.fundamental.toFixed(2)} Hz at ${f.toFixed(2)} Hz`
      : `new line at ${f.toFixed(2)} Hz`;
    const totals = isMains && m.measured
      ? `; mains total ${m.total.toExponential(3)}, odd ${m.odd.toExponential(3)}, even ${m.even.toExponential(3)} rms`
      : '';
    const overload = t.overloadFrom >= 0
      ? `; first seen while the average held segments with clipped samples (from sample ${t.overloadFrom}): likely an overload product`
      : '';
    const detail = raised
      ? `${this.channel} ${what}, ${t.amplitude.toExponential(3)} rms, ${t.heightDb.toFixed(1)} dB over the floor (first seen at sample ${t.firstSeen})${totals}${overload}`
      : `${this.channel} ${what} gone (last seen at sample ${t.lastSeen}, last at ${t.frequency.toFixed(2)} Hz)`;
    return makeEvent(isMains ? 'mains' : 'spur', raised ? 'raised' : 'cleared', this.channel, sample, this.sampleRate, wallTime, detail, {
      frequency: round(f, 7),
      amplitude: round(t.amplitude),
      levelDb: round(level),
      thresholdDb: round(thresholdDb),
      ...(isMains ? { harmonic: t.harmonic } : {}),
    });
  }
}
