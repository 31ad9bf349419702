// The detector set the pipeline plugs in: band rise and spur/mains rules per channel (against a baseline), and
// stream health. Narrow interface: onSnapshot/onGap/onLink/onClip/onOverrun each return the events to emit, in
// sample order; decisions use sample time only, so a replay at any speed yields the same events.
import type { AlarmState } from '../../dsp/detection/alarm-state.ts';
import { binPowerCorrelation } from '../../dsp/detection/threshold.ts';
import { makeWindow } from '../../dsp/windows.ts';
import { binFrequencies, overlapRho, welchStep } from '../../dsp/welch.ts';
import { DEFAULT_AVERAGING } from '../../dsp/averaging.ts';
import { RecentSpectrum } from '../../dsp/detection/recent-spectrum.ts';
import { IncidentBook, type IncidentRecord, type Member } from './incidents.ts';
import type { EventRule, FloorlineEvent } from '../../protocol/events.ts';
import { firstSettingMismatch, type AnalysisSettings } from '../../protocol/settings.ts';
import type { GapNotice, LinkNotice } from '../../protocol/stream.ts';
import { InputError } from '../errors.ts';
import { maskOnBins, type LimitMask } from '../../dsp/measure/limit-mask.ts';
import { LimitDetector } from './limit-detector.ts';
import { CoherenceDetector, type CoherenceStatus } from './coherence-detector.ts';
import { checkBaselineMatches, type BaselineFile } from '../baseline/format.ts';
import { BandDetector } from './band-detector.ts';
import { defaultBands } from './default-bands.ts';
import { HealthDetector } from './health-detector.ts';
import { MAX_SKIRT_BINS, SpurDetector } from './spur-detector.ts';
import { leakageEnvelope } from '../../dsp/detection/leakage.ts';
import { CONTAMINATION_HOLD_WEIGHT, contaminationWeight, segmentsAfter } from '../../dsp/detection/contamination.ts';
import type { RulesConfig } from './rules.ts';
import { makeEvent, round } from './event-factory.ts';
import type { CaptureRequester, SnapshotLike } from './types.ts';
import type { ClipNotice, OverrunNotice } from '../pipeline/types.ts';

export interface DetectorStream {
  settings: AnalysisSettings;
  channels: readonly { name: string; unit?: string }[];
  firstSample?: number;
  startWallTime?: string;
}

export interface DetectorOptions {
  /** Called for each raised alarm; the returned file name goes into the event's `capture`. */
  capture?: CaptureRequester;
  /** Limit masks by channel name ('*' = every channel without its own) for the limit rule. */
  masks?: Record<string, LimitMask & { path: string }>;
}

export interface DetectorStatus {
  channel: string;
  /**
   * `active`: raised as the event log shows it (announced and not cleared); `held`: new alarms are being held
   * because the average still holds clipped segments; `coveredByLines`: not judged, new lines cover every bin
   * (level and threshold then over all bins).
   */
  bands: {
    low: number;
    high: number;
    levelDb: number;
    thresholdDb: number;
    active: boolean;
    held: boolean;
    coveredByLines: boolean;
  }[];
  /** Mains fundamental (0 when none measured in the last spectrum), its nominal (0 until picked), RMS totals. */
  mains: { fundamental: number; nominal: number; total: number; odd: number; even: number };
  lines: {
    frequency: number;
    amplitude: number;
    heightDb: number;
    harmonic: number;
    firstSeen: number;
    lastSeen: number;
    active: boolean;
  }[];
  /** First clipped sample of the overload whose segments still weigh in the average (−1: none): alarms held. */
  overloadFrom: number;
}

interface ChannelDetectors {
  name: string;
  /** Built at the first snapshot (it needs the averaging in force). */
  recent?: RecentSpectrum;
  band?: BandDetector;
  spur: SpurDetector;
  /** First and last clipped sample of the current overload (−1: none). */
  clipFirst: number;
  clipLast: number;
  /** overloadFrom of the last spectrum (−1: not held). */
  heldFrom: number;
  limit?: LimitDetector;
}

export class Detectors {
  readonly settings: AnalysisSettings;
  private readonly channels: ChannelDetectors[];
  private readonly health: HealthDetector;
  private readonly sampleRate: number;
  private lastWallTime: string | undefined;
  /** Incidents of this detector set: one fault, one incident (agent/rules/incidents.ts). */
  readonly incidents: IncidentBook;
  /** Raised stream-health alarms (clip, gap, link, overrun) by rule and channel, with their raise sample. */
  private readonly healthMembers = new Map<string, { member: Member; since: number }>();
  private readonly rho: Float64Array;
  private readonly step: number;
  /** The coherent rule (absent when the rules disable it). */
  private readonly coherent: CoherenceDetector | undefined;

  constructor(
    readonly baseline: BaselineFile | undefined,
    readonly rules: RulesConfig,
    private readonly stream: DetectorStream,
    private readonly options: DetectorOptions = {},
    baselineWhere = 'file',
  ) {
    const s = stream.settings;
    this.settings = s;
    this.sampleRate = s.sampleRate;
    if (baseline)
      checkBaselineMatches(
        baseline,
        s,
        stream.channels.map((c) => c.name),
        baselineWhere,
      );
    const win = makeWindow(s.window, s.segment);
    const corr = binPowerCorrelation(win.values);
    const leakage = leakageEnvelope(win.values, MAX_SKIRT_BINS);
    const binHz = s.sampleRate / s.segment;
    const bins = s.segment / 2 + 1;
    this.incidents = new IncidentBook(s.sampleRate, binHz);
    this.step = welchStep(s.segment, s.overlap);
    this.rho = overlapRho(win.values, this.step);
    const frequencies = binFrequencies(s.sampleRate, s.segment);
    const defaults = defaultBands(s.sampleRate, s.segment, win.mainLobeHalfWidth);
    this.channels = stream.channels.map(({ name, unit }) => {
      const b = baseline?.channels.find((c) => c.name === name);
      const basePsd = b ? Float64Array.from(b.psd) : new Float64Array(bins);
      const bands = rules.band.channelBands[name] ?? (rules.band.bands.length ? rules.band.bands : defaults);
      return {
        name,
        band: b
          ? new BandDetector(
              name,
              bands,
              basePsd,
              b.equivalentAverages,
              binHz,
              corr,
              rules,
              s.sampleRate,
              this.incidents,
            )
          : undefined,
        spur: new SpurDetector(
          name,
          frequencies,
          binHz,
          win.mainLobeHalfWidth,
          leakage,
          basePsd,
          rules,
          s.sampleRate,
          unit ?? 'V',
          this.incidents,
        ),
        clipFirst: -1,
        clipLast: -1,
        heldFrom: -1,
        limit: this.limitFor(name, unit ?? 'V', frequencies),
      };
    });
    this.coherent = rules.coherent.enabled
      ? new CoherenceDetector(rules, s.sampleRate, s.segment, this.step, this.incidents)
      : undefined;
    this.health = new HealthDetector(
      s.sampleRate,
      Math.round(rules.clipHold * s.sampleRate),
      Math.round(rules.overrunHold * s.sampleRate),
    );
  }

  private limitFor(name: string, unit: string, frequencies: Float64Array): LimitDetector | undefined {
    const mask = this.options.masks?.[name] ?? this.options.masks?.['*'];
    if (!mask) return undefined;
    const nyquist = this.sampleRate / 2;
    const top = mask.frequency[mask.frequency.length - 1];
    if (top > nyquist) {
      throw new InputError(
        `--mask ${mask.path}: its last point at ${top} Hz is beyond the Nyquist frequency ${nyquist} Hz of the stream; end the mask at or below it.`,
      );
    }
    return new LimitDetector(name, unit, frequencies, maskOnBins(mask, frequencies), this.rules, this.sampleRate);
  }

  /** Bands evaluated on a channel (empty without a baseline). */
  bandsOf(channel: string): readonly { low: number; high: number }[] {
    return this.channels.find((c) => c.name === channel)?.band?.bands ?? [];
  }

  /** The coherent rule's pairs: bound and coherence at the lines both channels show (empty when disabled). */
  coherenceStatus(): CoherenceStatus[] {
    return this.coherent?.status() ?? [];
  }

  /** Latest readings per channel, for status pages and metrics: band levels against thresholds, mains, lines. */
  status(): DetectorStatus[] {
    return this.channels.map((c) => {
      const cmp = c.band?.compare;
      const m = c.spur.mains;
      return {
        channel: c.name,
        bands: (cmp?.bands ?? []).map((b, i) => ({
          low: b.low,
          high: b.high,
          levelDb: cmp!.levelDb[i],
          thresholdDb: cmp!.thresholdDb[i],
          active: c.band!.state(i).raised,
          held: c.heldFrom >= 0,
          coveredByLines: cmp!.coveredByLines[i] === 1,
        })),
        mains: { fundamental: m.fundamental, nominal: m.nominal, total: m.total, odd: m.odd, even: m.even },
        lines: c.spur.tracked.map((t) => ({
          frequency: t.frequency,
          amplitude: t.amplitude,
          heightDb: t.heightDb,
          harmonic: t.harmonic,
          firstSeen: t.firstSeen,
          lastSeen: t.lastSeen,
          active: t.state.raised,
        })),
        overloadFrom: c.heldFrom,
      };
    });
  }

  onSnapshot(snap: SnapshotLike): FloorlineEvent[] {
    const diff = firstSettingMismatch(snap.settings, this.settings);
    if (diff) {
      throw new InputError(
        `alarms: a spectrum arrived with other analysis settings than the detectors were built for: ${diff}; rebuild the detectors after changing settings.`,
      );
    }
    this.lastWallTime = snap.wallTime;
    const out: FloorlineEvent[] = [];
    this.health.onTime(snap.sample, snap.wallTime, out);
    for (const ch of snap.channels) {
      const d = this.channels.find((c) => c.name === ch.name);
      if (!d) continue;
      d.heldFrom = this.overloadHold(d, ch, snap);
      const recent = this.recentOf(d, snap);
      recent.push(ch.psd, ch.segmentsUsed);
      // Lines first: the band rules judge the floor without the lobes of the new lines the spur rule tracks.
      d.spur.onSpectrum(ch.psd, ch.equivalentAverages, recent, snap.sample, snap.wallTime, out, d.heldFrom);
      d.band?.onSpectrum(
        ch.psd,
        ch.equivalentAverages,
        recent,
        snap.sample,
        snap.wallTime,
        out,
        d.spur.lineMask,
        d.heldFrom,
      );
      if (d.limit) {
        const limitEvents: FloorlineEvent[] = [];
        d.limit.onSpectrum(ch.psd, ch.equivalentAverages, snap.sample, snap.wallTime, limitEvents, d.heldFrom);
        for (const e of limitEvents) this.healthIncident(e); // one member per channel, as the health rules
        out.push(...limitEvents);
      }
    }
    if (this.coherent && snap.coherence) {
      const units = new Map(this.stream.channels.map((c) => [c.name, c.unit ?? 'V']));
      this.coherent.onSnapshot(
        snap.sample,
        snap.wallTime,
        snap.averaging ?? DEFAULT_AVERAGING,
        snap.coherence,
        (name) => {
          const d = this.channels.find((c) => c.name === name);
          const ch = snap.channels.find((c) => c.name === name);
          return d && ch
            ? { psd: ch.psd, unit: units.get(name) ?? 'V', spur: d.spur, heldFrom: d.heldFrom }
            : undefined;
        },
        out,
      );
    }
    return this.withCaptures(out);
  }

  private recentOf(d: ChannelDetectors, snap: SnapshotLike): RecentSpectrum {
    if (d.recent) return d.recent;
    const s = this.settings;
    const averaging = snap.averaging ?? DEFAULT_AVERAGING;
    const windowSegments = Math.max(1, Math.ceil((this.rules.recentWindow * s.sampleRate - s.segment) / this.step) + 1);
    d.recent = new RecentSpectrum({
      bins: s.segment / 2 + 1,
      averaging,
      segment: s.segment,
      step: this.step,
      sampleRate: s.sampleRate,
      windowSegments,
      rho: this.rho,
    });
    return d.recent;
  }

  /**
   * Overload hold: while a channel's clip alarm is raised, and after it until the newest segment holding clipped
   * samples weighs less than CONTAMINATION_HOLD_WEIGHT (1 %) of what it entered with (dsp/detection/contamination.ts),
   * new spectral alarms on that channel are held: the clipped segments spread the overload's harmonics and
   * intermodulation over the spectrum. Returns the overload's first clipped sample while held, else −1.
   */
  private overloadHold(d: ChannelDetectors, ch: SnapshotLike['channels'][number], snap: SnapshotLike): number {
    if (d.clipLast < 0) return -1;
    // A clip notice comes with its block, which may reach past this snapshot: no hold before the first clipped sample.
    if (snap.sample < d.clipFirst) return -1;
    if (this.health.clipActive(d.name)) return d.clipFirst;
    const s = this.settings;
    const step = welchStep(s.segment, s.overlap);
    const newer = segmentsAfter(ch.lastSegmentSample ?? snap.sample, d.clipLast, s.segment, step);
    const averaging = snap.averaging ?? DEFAULT_AVERAGING;
    if (contaminationWeight(averaging, newer, ch.segmentsUsed, step / s.sampleRate) > CONTAMINATION_HOLD_WEIGHT)
      return d.clipFirst;
    d.clipFirst = d.clipLast = -1;
    return -1;
  }

  onGap(gap: GapNotice): FloorlineEvent[] {
    const out: FloorlineEvent[] = [];
    this.health.onGap(gap, this.wallTimeAt(gap.sample), out);
    return this.withCaptures(out);
  }

  onLink(link: LinkNotice): FloorlineEvent[] {
    const out: FloorlineEvent[] = [];
    this.health.onLink(link, this.wallTimeAt(link.sample), out);
    return this.withCaptures(out);
  }

  /** Samples of a channel within 0.1 % of full scale (the pipeline's ClipNotice). */
  onClip(clip: ClipNotice): FloorlineEvent[] {
    const out: FloorlineEvent[] = [];
    const d = this.channels.find((c) => c.name === clip.channel);
    if (d) {
      if (d.clipLast < 0) d.clipFirst = clip.firstSample;
      d.clipLast = Math.max(d.clipLast, clip.lastSample);
    }
    this.health.onClip(clip.channel, clip.firstSample, clip.count, this.wallTimeAt(clip.firstSample), out);
    return this.withCaptures(out);
  }

  /** Whole blocks dropped by the pipeline (its OverrunNotice). */
  onOverrun(o: OverrunNotice): FloorlineEvent[] {
    const out: FloorlineEvent[] = [];
    this.health.onOverrun(o.sample, o.droppedBlocks, this.wallTimeAt(o.sample), out);
    return this.withCaptures(out);
  }

  /**
   * Acknowledges active alarms of a rule on a channel (optionally one band, or one line by its announced
   * frequency): no re-alarms until they clear.
   */
  acknowledge(rule: EventRule, channel: string, band?: [number, number], frequency?: number): number {
    return this.forStates(rule, channel, band, (s) => s.acknowledge(), frequency);
  }

  /** Silences a rule on a channel (optionally one band or one line) until `untilSample`. */
  shelve(rule: EventRule, channel: string, untilSample: number, band?: [number, number], frequency?: number): number {
    const ch = this.channels.find((c) => c.name === channel);
    if (ch && (rule === 'spur' || rule === 'mains') && frequency === undefined) ch.spur.shelvedUntil = untilSample;
    return this.forStates(rule, channel, band, (s) => s.shelve(untilSample), frequency);
  }

  /** Acknowledges every alarm of an incident (and those that join it later). False: no such incident. */
  acknowledgeIncident(id: string): boolean {
    return this.incidents.acknowledge(id);
  }

  /** Shelves every alarm of an incident (and those that join it later) until `untilSample`. */
  shelveIncident(id: string, untilSample: number): boolean {
    return this.incidents.shelve(id, untilSample);
  }

  /** Attaches an operator note to an incident at sample time `sample`. */
  noteIncident(id: string, text: string, sample: number): boolean {
    return this.incidents.note(id, text, { sample, t: sample / this.sampleRate, wallTime: this.wallTimeAt(sample) });
  }

  /** Incidents kept in memory, oldest first, in the shape the incident listings use. */
  incidentRecords(): IncidentRecord[] {
    return this.incidents.all().map((i) => this.incidents.record(i));
  }

  /**
   * This set is being replaced at `sample` (`reason` says why): every raised alarm is cleared and every open
   * incident ended there, since the new set knows nothing of them. The clear is not a judged one: its detail
   * says so and why, and carries the peak and duration so far. Returns the events and the incidents ended.
   */
  retire(sample: number, wallTime: string, reason: string): { events: FloorlineEvent[]; ended: IncidentRecord[] } {
    const at = { sample, t: sample / this.sampleRate, wallTime };
    const members = this.incidents.closeOpen(at);
    this.healthMembers.clear();
    const events = members.map(({ member: m, end }) => {
      const durationSeconds = round((end.sample - m.joined.sample) / this.sampleRate, 6);
      const p = m.peak;
      const what = [
        m.rule,
        m.channel === '*' ? 'stream' : m.channel,
        m.band ? `${m.band[0]}–${m.band[1]} Hz` : '',
        m.frequency !== undefined ? `${m.frequency} Hz` : '',
      ]
        .filter(Boolean)
        .join(' ');
      const peak = p ? `; peak ${p.levelDb} dB at sample ${p.sample}` : '';
      const e = makeEvent(
        m.rule,
        'cleared',
        m.channel,
        end.sample,
        this.sampleRate,
        end.wallTime,
        `${what} closed without a judged end: ${reason}${peak}, after ${durationSeconds} s`,
        {
          ...(m.band ? { band: m.band } : {}),
          ...(m.frequency !== undefined ? { frequency: m.frequency } : {}),
          ...(m.harmonic ? { harmonic: m.harmonic } : {}),
          ...(m.channels ? { channels: m.channels } : {}),
          ...(p
            ? {
                peakLevelDb: p.levelDb,
                peakSample: p.sample,
                ...(p.amplitude !== undefined ? { peakAmplitude: p.amplitude } : {}),
              }
            : {}),
          durationSeconds,
        },
      );
      this.incidents.stamp(e, m);
      return e;
    });
    const ended = [...new Set(members.map((c) => c.member.incident))].map((i) => this.incidents.record(i));
    return { events, ended };
  }

  private forStates(
    rule: EventRule,
    channel: string,
    band: [number, number] | undefined,
    fn: (s: AlarmState) => void,
    frequency?: number,
  ): number {
    const ch = this.channels.find((c) => c.name === channel);
    if (!ch) return 0;
    let n = 0;
    if (rule === 'band-rise' && ch.band) {
      ch.band.bands.forEach((b, i) => {
        if (band && (b.low !== band[0] || b.high !== band[1])) return;
        fn(ch.band!.state(i));
        n++;
      });
    } else if (rule === 'spur' || rule === 'mains') {
      for (const t of ch.spur.tracked) {
        if (frequency !== undefined && Math.abs(t.announcedFrequency - frequency) > 1e-6 * Math.max(1, frequency))
          continue;
        if (t.harmonic > 0 === (rule === 'mains')) {
          fn(t.state);
          n++;
        }
      }
    } else if (rule === 'coherent' && this.coherent) {
      for (const st of this.coherent.states(channel, frequency)) {
        fn(st);
        n++;
      }
    } else if (rule === 'limit' && ch.limit) {
      fn(ch.limit.state);
      n++;
    }
    return n;
  }

  /**
   * Gives stream-health alarms their incidents, and asks for a capture at each raise, named after the incident and
   * the channel that raised it (a later alarm of the same incident extends that capture).
   */
  private withCaptures(events: FloorlineEvent[]): FloorlineEvent[] {
    for (const e of events) if (e.kind === 'alarm' && !e.incident) this.healthIncident(e);
    const cap = this.options.capture;
    if (!cap) return events;
    for (const e of events) {
      if (e.kind !== 'alarm' || e.state !== 'raised') continue;
      const who = e.channel === '*' ? 'stream' : e.channel;
      const file = cap(e.sample, e.incident ? `${e.incident}-${who}` : `${e.rule}-${who}`);
      if (file) {
        e.capture = file;
        const inc = e.incident ? this.incidents.get(e.incident) : undefined;
        if (inc && !inc.capture) inc.capture = file;
      }
    }
    return events;
  }

  private healthIncident(e: FloorlineEvent): void {
    const key = `${e.rule}|${e.channel}`;
    const at = { sample: e.sample, t: e.t, wallTime: e.wallTime };
    const held = this.healthMembers.get(key);
    if (e.state === 'raised') {
      const h = held ?? { member: this.incidents.join({ rule: e.rule, channel: e.channel }, at), since: e.sample };
      this.healthMembers.set(key, h);
      this.incidents.stamp(e, h.member);
    } else if (e.state === 'cleared' && held) {
      e.durationSeconds = round((e.sample - held.since) / this.sampleRate, 6);
      this.incidents.stamp(e, held.member);
      this.incidents.leave(held.member, at);
      this.healthMembers.delete(key);
    }
  }

  private wallTimeAt(sample: number): string {
    const start = this.stream.startWallTime ? Date.parse(this.stream.startWallTime) : NaN;
    if (Number.isFinite(start)) {
      return new Date(start + ((sample - (this.stream.firstSample ?? 0)) / this.sampleRate) * 1000).toISOString();
    }
    // No start time known: a label derived from sample time alone keeps replays identical.
    return this.lastWallTime ?? new Date((sample / this.sampleRate) * 1000).toISOString();
  }
}
