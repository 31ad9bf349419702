// The coherent rule: a line the spur finder finds on both channels of a pair (within a main lobe) whose
// magnitude-squared coherence between them stands above max(minCoherence, chance bound). The chance bound is the
// MSC two independent series exceed with probability α after the estimate's equivalent averages
// (dsp/detection/coherence-bound.ts); the floor keeps weak chance coherence of long averages from alarming. Lines
// of the same frequency from independent sources (their phases drift apart) are not coherent and do not alarm.
// Decisions in sample time; one alarm state per pair and line.
import { AlarmLife } from '../../dsp/detection/alarm-life.ts';
import { AlarmState, AlarmTransition, type AlarmTiming } from '../../dsp/detection/alarm-state.ts';
import { coherenceChanceBound } from '../../dsp/detection/coherence-bound.ts';
import { powerRatioDb } from '../../dsp/units.ts';
import type { AveragingSpec } from '../../dsp/averaging.ts';
import type { FloorlineEvent } from '../../protocol/events.ts';
import { formatSi } from '../../protocol/si.ts';
import type { SnapshotCoherence } from '../pipeline/types.ts';
import { makeEvent, round, roundDb } from './event-factory.ts';
import type { IncidentBook, Member } from './incidents.ts';
import { timingInSamples, type RulesConfig } from './rules.ts';
import { MAX_TRACKED_LINES, type SpurDetector } from './spur-detector.ts';

/** What the rule reads of one channel at a snapshot: its density and its spur finder's lines in it. */
export interface CoherenceChannel {
  psd: Float64Array;
  unit: string;
  spur: SpurDetector;
  /** First clipped sample of an overload still in the average (−1: none): new alarms are held. */
  heldFrom: number;
}

interface TrackedPair {
  bin: number;
  frequency: number;
  announcedFrequency: number;
  coherence: number;
  levelDb: number;
  amplitude: number;
  lastSeen: number;
  state: AlarmState;
  life: AlarmLife;
  /** Height over the floor at the peak coherence (cleared events quote it). */
  peakLevelDb: number;
  member?: Member;
}

interface PairState {
  a: string;
  b: string;
  threshold: number;
  equivalentAverages: number;
  tracked: TrackedPair[];
}

/** Status of one pair: its bound and its coherence at the lines both channels show. */
export interface CoherenceStatus {
  a: string;
  b: string;
  equivalentAverages: number;
  threshold: number;
  lines: { frequency: number; coherence: number; active: boolean }[];
}

export class CoherenceDetector {
  private readonly pairs = new Map<string, PairState>();
  private readonly timing: AlarmTiming;

  constructor(
    private readonly rules: RulesConfig,
    private readonly sampleRate: number,
    private readonly segment: number,
    private readonly step: number,
    private readonly book: IncidentBook,
  ) {
    this.timing = timingInSamples(rules.coherent, sampleRate);
  }

  /** Pairs with their bound and the coherence at the lines tracked on both channels, from the last snapshot. */
  status(): CoherenceStatus[] {
    return [...this.pairs.values()].map((p) => ({
      a: p.a,
      b: p.b,
      equivalentAverages: round(p.equivalentAverages),
      threshold: round(p.threshold),
      lines: p.tracked.map((t) => ({
        frequency: round(t.frequency, 7),
        coherence: round(t.coherence),
        active: t.state.raised,
      })),
    }));
  }

  /** Alarm states of coherent lines whose first channel is `channel` (optionally the one announced at `frequency`). */
  states(channel: string, frequency?: number): AlarmState[] {
    const out: AlarmState[] = [];
    for (const p of this.pairs.values()) {
      if (p.a !== channel) continue;
      for (const t of p.tracked)
        if (frequency === undefined || Math.abs(t.announcedFrequency - frequency) <= 1e-6 * Math.max(1, frequency))
          out.push(t.state);
    }
    return out;
  }

  onSnapshot(
    sample: number,
    wallTime: string,
    averaging: AveragingSpec,
    pairs: readonly SnapshotCoherence[],
    channel: (name: string) => CoherenceChannel | undefined,
    out: FloorlineEvent[],
  ): void {
    for (const pc of pairs) {
      const ca = channel(pc.a);
      const cb = channel(pc.b);
      if (!ca || !cb) continue;
      const key = `${pc.a}\u0000${pc.b}`;
      let p = this.pairs.get(key);
      if (!p) {
        p = { a: pc.a, b: pc.b, threshold: 1, equivalentAverages: 0, tracked: [] };
        this.pairs.set(key, p);
      }
      p.equivalentAverages = pc.equivalentAverages;
      if (!(pc.equivalentAverages >= this.rules.coherent.minAverages)) continue;
      const bound = coherenceChanceBound(pc.equivalentAverages, this.rules.coherent.alpha);
      p.threshold = Math.max(this.rules.coherent.minCoherence, bound);
      this.evaluate(p, pc.coherence, ca, cb, sample, wallTime, averaging, out);
    }
  }

  private evaluate(
    p: PairState,
    gamma: Float64Array,
    ca: CoherenceChannel,
    cb: CoherenceChannel,
    sample: number,
    wallTime: string,
    averaging: AveragingSpec,
    out: FloorlineEvent[],
  ): void {
    const fa = ca.spur.finder;
    const fb = cb.spur.finder;
    const lobe = fa.lobe;
    // Lines both channels show now (within a main lobe of each other): the candidates.
    for (let i = 0; i < ca.spur.found; i++) {
      const k = fa.lineBin[i];
      let onB = false;
      for (let j = 0; j < cb.spur.found && !onB; j++) if (Math.abs(fb.lineBin[j] - k) <= lobe) onB = true;
      if (!onB) continue;
      let t = p.tracked.find((x) => Math.abs(x.bin - k) <= lobe);
      if (!t) {
        if (p.tracked.length >= MAX_TRACKED_LINES) continue;
        t = {
          bin: k,
          frequency: 0,
          announcedFrequency: 0,
          coherence: 0,
          levelDb: -Infinity,
          amplitude: 0,
          lastSeen: sample,
          state: new AlarmState(this.timing),
          life: new AlarmLife(),
          peakLevelDb: -Infinity,
        };
        p.tracked.push(t);
      }
      t.bin = k;
      t.frequency = fa.lineFrequency[i];
      t.amplitude = fa.lineAmplitude[i];
      t.lastSeen = sample;
    }
    const deadband = this.timing.deadband;
    for (let j = p.tracked.length - 1; j >= 0; j--) {
      const t = p.tracked[j];
      const present = t.lastSeen === sample;
      t.coherence = peakNear(gamma, t.bin);
      t.levelDb = heightOverFloor(ca, t.bin, lobe);
      // A raise needs the line on both channels; once raised, the coherence itself decides the clear.
      const level = present || t.state.active ? t.coherence : 0;
      if (ca.heldFrom >= 0 || cb.heldFrom >= 0) t.state.hold(sample + 1);
      t.life.observe(sample, level, p.threshold - deadband, t.state.active);
      const tr = t.state.update(sample, level, p.threshold);
      if (tr === AlarmTransition.Raised) {
        t.life.raised(sample);
        t.announcedFrequency = t.frequency;
        t.member = this.book.join(
          {
            rule: 'coherent',
            channel: p.a,
            channels: [p.a, p.b],
            frequency: round(t.frequency, 7),
            state: t.state,
            peakNow: () =>
              t.life.peakSample >= 0 ? { levelDb: roundDb(t.peakLevelDb), sample: t.life.peakSample } : undefined,
          },
          { sample, t: sample / this.sampleRate, wallTime },
        );
      }
      if (t.state.raised) {
        const before = t.life.peakLevel;
        t.life.track(sample, t.coherence);
        if (t.life.peakLevel !== before) t.peakLevelDb = t.levelDb;
      }
      if (tr !== AlarmTransition.None) out.push(this.event(p, t, tr, sample, wallTime, ca.unit));
      const span = settleSpan(averaging, this.sampleRate, this.segment, this.step);
      if (t.state.raised && Number.isFinite(span) && t.life.settlesNow(sample - span + 1))
        out.push(this.settledEvent(p, t, sample, wallTime, ca.unit));
      if (tr === AlarmTransition.Cleared) t.life.cleared();
      if (!t.state.active && !present) p.tracked.splice(j, 1);
    }
  }

  private event(
    p: PairState,
    t: TrackedPair,
    tr: AlarmTransition,
    sample: number,
    wallTime: string,
    unit: string,
  ): FloorlineEvent {
    const raised = tr !== AlarmTransition.Cleared;
    const f = t.announcedFrequency;
    const coherence = round(t.coherence, 3);
    const threshold = round(p.threshold, 3);
    const levelDb = roundDb(t.levelDb);
    const what = `${f.toFixed(2)} Hz`;
    let detail: string;
    let extra: Partial<FloorlineEvent>;
    if (raised) {
      const amplitude = round(t.amplitude);
      detail =
        `${what} coherent on ${p.a} and ${p.b} (γ² ${coherence}, bound ${threshold} after ${round(p.equivalentAverages, 3)} equivalent averages); ` +
        `on ${p.a} ${levelDb} dB over the floor, ${formatSi(amplitude, unit)} rms${tr === AlarmTransition.Repeated ? ', still active' : ''}`;
      extra = { amplitude };
    } else {
      const life = t.life;
      const peakCoherence = round(life.peakLevel, 3);
      const peakLevelDb = roundDb(t.peakLevelDb);
      const durationSeconds = round((sample - life.raisedAt) / this.sampleRate, 6);
      detail =
        `${what} no longer coherent on ${p.a} and ${p.b} (γ² ${coherence}, bound ${threshold}); on ${p.a} ${levelDb} dB over the floor; ` +
        `peak γ² ${peakCoherence} at sample ${life.peakSample} (${peakLevelDb} dB), after ${durationSeconds} s`;
      extra = { peakCoherence, peakLevelDb, peakSample: life.peakSample, durationSeconds };
    }
    const e = makeEvent('coherent', raised ? 'raised' : 'cleared', p.a, sample, this.sampleRate, wallTime, detail, {
      channels: [p.a, p.b],
      coherence,
      frequency: round(f, 7),
      ...(Number.isFinite(levelDb) ? { levelDb } : {}),
      ...extra,
    });
    if (t.member) {
      this.book.stamp(e, t.member);
      if (!raised) {
        this.book.leave(
          t.member,
          { sample, t: sample / this.sampleRate, wallTime },
          { levelDb: roundDb(t.peakLevelDb), sample: t.life.peakSample },
        );
        t.member = undefined;
      }
    }
    return e;
  }

  private settledEvent(p: PairState, t: TrackedPair, sample: number, wallTime: string, unit: string): FloorlineEvent {
    const coherence = round(t.coherence, 3);
    const levelDb = roundDb(t.levelDb);
    const amplitude = round(t.amplitude);
    const e = makeEvent(
      'coherent',
      'settled',
      p.a,
      sample,
      this.sampleRate,
      wallTime,
      `${t.announcedFrequency.toFixed(2)} Hz coherent on ${p.a} and ${p.b} settled at γ² ${coherence}; on ${p.a} ${levelDb} dB over the floor, ` +
        `${formatSi(amplitude, unit)} rms, at ${t.frequency.toFixed(2)} Hz (the average holds only samples after the onset)`,
      {
        channels: [p.a, p.b],
        coherence,
        frequency: round(t.frequency, 7),
        amplitude,
        ...(Number.isFinite(levelDb) ? { levelDb } : {}),
      },
    );
    if (t.member) this.book.stamp(e, t.member);
    return e;
  }
}

/** Largest coherence of the bin and its two neighbours (a line between bins shares its power). */
function peakNear(gamma: Float64Array, bin: number): number {
  let best = 0;
  for (let b = Math.max(0, bin - 1); b <= Math.min(gamma.length - 1, bin + 1); b++)
    if (gamma[b] > best) best = gamma[b];
  return best;
}

/** The line's height over the local floor on a channel, dB: the best bin within the lobe. */
function heightOverFloor(c: CoherenceChannel, bin: number, lobe: number): number {
  const floor = c.spur.finder.floorAt(c.psd, bin);
  let level = -Infinity;
  for (let b = Math.max(0, bin - lobe); b <= Math.min(c.psd.length - 1, bin + lobe); b++) {
    const h = powerRatioDb(c.psd[b] / floor);
    if (h > level) level = h;
  }
  return level;
}

/**
 * Samples back from a snapshot that the cross-spectral average still weighs: 3 τ for exponential averaging, the
 * window of K segments for rolling (and median, averaged as rolling); a mean or max-hold always holds the segments
 * from before the onset, so those never settle (Infinity).
 */
export function settleSpan(averaging: AveragingSpec, sampleRate: number, segment: number, step: number): number {
  if (averaging.mode === 'exponential') return Math.round(3 * averaging.tauSeconds * sampleRate);
  if (averaging.mode === 'rolling' || averaging.mode === 'median') return (averaging.count - 1) * step + segment;
  return Infinity;
}
