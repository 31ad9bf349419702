// The pipeline's detector hook (agent/pipeline/types.ts Detector): builds the detector set from the first snapshot's
// analysis settings and channels, so callers need not know them in advance. A baseline taken with other settings
// is refused then (InputError naming the setting). If the analysis is reconfigured later in a live run, the set is
// rebuilt; when the baseline no longer matches, the comparison rules stop and an info event says why, and when
// the settings match it again (the dashboard's way back) they resume, with an info event too.
import type { FloorlineEvent } from '../../protocol/events.ts';
import { firstSettingMismatch } from '../../protocol/settings.ts';
import type { GapNotice, LinkNotice, StreamInfo } from '../../protocol/stream.ts';
import type { BaselineFile } from '../baseline/format.ts';
import type { ClipNotice, Detector, OverrunNotice, SpectrumSnapshot } from '../pipeline/types.ts';
import type { LimitMask } from '../../dsp/measure/limit-mask.ts';
import { Detectors } from './detectors.ts';
import { makeEvent } from './event-factory.ts';
import { defaultRules, type RulesConfig } from './rules.ts';
import { MAX_CLOSED_INCIDENTS, type IncidentRecord } from './incidents.ts';
import type { CaptureRequester } from './types.ts';

export interface AlarmHookOptions {
  baseline?: BaselineFile;
  /** Where the baseline came from, for messages. */
  baselineWhere?: string;
  rules?: RulesConfig;
  capture?: CaptureRequester;
  /** Limit masks by channel name ('*' = every channel) for the limit rule. */
  masks?: Record<string, LimitMask & { path: string; unit?: string }>;
}

export class AlarmHook implements Detector {
  private info: StreamInfo | undefined;
  private set: Detectors | undefined;
  private baselineDropped = false;
  /** A set was built once, or a client changed the settings: a baseline mismatch from then on drops the baseline
   * (with an event) instead of refusing the run, which only the settings the run started with may do. */
  private started = false;
  /** A baseline handed over while running (e.g. captured from the dashboard), applied at the next snapshot. */
  private pendingBaseline: { baseline: BaselineFile; where: string } | undefined;
  private readonly onBuild: ((d: Detectors) => void)[] = [];
  /** Incidents of replaced detector sets that were open when their set went (ended then), newest last. */
  private retired: IncidentRecord[] = [];
  private o: AlarmHookOptions;

  constructor(options: AlarmHookOptions = {}) {
    this.o = { ...options };
  }

  /**
   * Compares against `baseline` from the next snapshot on (the detector set is rebuilt there, and an info event
   * says so). Refused at once, naming the setting, when it was taken with other analysis settings than the
   * running ones.
   */
  useBaseline(baseline: BaselineFile, where: string): void {
    const running = this.set?.settings;
    const mismatch = running ? firstSettingMismatch(baseline.settings, running) : undefined;
    if (mismatch)
      throw new Error(
        `baseline ${where} was taken with other analysis settings: ${mismatch}; capture one with the running settings`,
      );
    this.pendingBaseline = { baseline, where };
  }

  /** The current detector set (after the first snapshot), for acknowledge/shelve and status. */
  get detectors(): Detectors | undefined {
    return this.set;
  }

  /** Runs `fn` on each detector set as it is built (e.g. to apply shelving from the first snapshot on). */
  whenBuilt(fn: (d: Detectors) => void): void {
    this.onBuild.push(fn);
  }

  /** The incidents of the current set, after those ended when earlier sets were replaced (undefined before any). */
  incidentRecords(): IncidentRecord[] | undefined {
    if (!this.set && this.retired.length === 0) return undefined;
    return [...this.retired, ...(this.set?.incidentRecords() ?? [])];
  }

  onInfo(info: StreamInfo): void {
    this.info = info;
  }

  onSnapshot(snap: SpectrumSnapshot): FloorlineEvent[] {
    const pre: FloorlineEvent[] = [];
    if (this.pendingBaseline) {
      const { baseline, where } = this.pendingBaseline;
      this.pendingBaseline = undefined;
      this.o = { ...this.o, baseline, baselineWhere: where };
      this.baselineDropped = false;
      pre.push(
        makeEvent(
          'baseline',
          'raised',
          '*',
          snap.sample,
          snap.settings.sampleRate,
          snap.wallTime,
          `comparing against baseline ${where} from this snapshot on (alarm rules restarted)`,
          {},
          'info',
        ),
      );
      this.retire(snap, `the alarm rules restarted on baseline ${where}`, pre);
      this.set = undefined;
    }
    const changed = this.set ? firstSettingMismatch(snap.settings, this.set.settings) : undefined;
    if (changed) this.retire(snap, `the alarm rules were rebuilt for new analysis settings (${changed})`, pre);
    if (!this.set || changed) this.build(snap, pre);
    const events = this.set!.onSnapshot(snap);
    return pre.length ? [...pre, ...events] : events;
  }

  onGap(g: GapNotice): FloorlineEvent[] {
    return this.set?.onGap(g) ?? [];
  }

  onLink(l: LinkNotice): FloorlineEvent[] {
    return this.set?.onLink(l) ?? [];
  }

  onClip(c: ClipNotice): FloorlineEvent[] {
    return this.set?.onClip(c) ?? [];
  }

  onOverrun(o: OverrunNotice): FloorlineEvent[] {
    return this.set?.onOverrun(o) ?? [];
  }

  /** Ends the current set's open alarms and incidents before it is replaced (Detectors.retire). */
  private retire(snap: SpectrumSnapshot, reason: string, out: FloorlineEvent[]): void {
    if (!this.set) return;
    const { events, ended } = this.set.retire(snap.sample, snap.wallTime, reason);
    out.push(...events);
    this.retired.push(...ended);
    if (this.retired.length > MAX_CLOSED_INCIDENTS) this.retired.splice(0, this.retired.length - MAX_CLOSED_INCIDENTS);
  }

  /** The analysis settings were changed while running (a client's set-analysis): never refuse the run for them. */
  settingsChangedLive(): void {
    this.started = true;
  }

  private build(snap: SpectrumSnapshot, pre: FloorlineEvent[]): void {
    const first = !this.started;
    this.started = true;
    let baseline = this.o.baseline;
    const mismatch = baseline ? firstSettingMismatch(baseline.settings, snap.settings) : undefined;
    if (baseline && !mismatch && this.baselineDropped) {
      this.baselineDropped = false;
      pre.push(
        makeEvent(
          'baseline',
          'raised',
          '*',
          snap.sample,
          snap.settings.sampleRate,
          snap.wallTime,
          `baseline comparison resumed: the analysis settings match baseline ${this.o.baselineWhere ?? 'in use'} again (alarm rules restarted)`,
          {},
          'info',
        ),
      );
    }
    if (baseline && mismatch && !first) {
      baseline = undefined;
      if (!this.baselineDropped)
        pre.push(
          makeEvent(
            'baseline',
            'cleared',
            '*',
            snap.sample,
            snap.settings.sampleRate,
            snap.wallTime,
            `baseline comparison stopped: the analysis now differs from the baseline's in ${mismatch}; go back to its settings, or capture a new baseline`,
            {},
            'info',
          ),
        );
      this.baselineDropped = true;
    }
    // On the first snapshot a mismatch throws (checkBaselineMatches inside Detectors): the run is refused.
    this.set = new Detectors(
      baseline,
      this.o.rules ?? defaultRules(),
      {
        settings: snap.settings,
        channels: snap.channels,
        firstSample: this.info?.firstSample,
        startWallTime: this.info?.startWallTime,
      },
      { capture: this.o.capture, masks: this.o.masks },
      this.o.baselineWhere,
    );
    for (const fn of this.onBuild) fn(this.set);
  }
}
