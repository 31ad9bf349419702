// One alarm's state machine in sample time: on-delay, off-delay, deadband (hysteresis), re-alarm interval,
// acknowledge and shelve. Raise when the level has stayed above the threshold for onDelay samples; clear when it
// has stayed below (threshold − deadband) for offDelay samples. Levels between the two keep the current state, so a
// fault flickering around its threshold gives one raise and one clear (common practice for process alarms,
// e.g. the deadband and on/off-delay parameters of alarm-management practice, ISA-18.2 / EEMUA 191).
//
// Two estimates may feed it: `level` (the long average, sensitive and steady: it raises) and `recent` (a short
// window that forgets within seconds: it judges the clear, so a fault's end is stamped near its real end). A clear
// taken on the short estimate while the long one is still above threshold − deadband leaves the state waiting to
// re-arm: a new raise then needs the short estimate back above the threshold, so the long average's slow decay
// cannot re-raise a fault that has ended, and the deadband still separates raise and clear on the short estimate.

export interface AlarmTiming {
  /** Samples the level must stay above the threshold before raising (0 = at once). */
  onDelay: number;
  /** Samples the level must stay below threshold − deadband before clearing (0 = at once). */
  offDelay: number;
  /** Hysteresis in the level's unit (dB for band rules). */
  deadband: number;
  /** Repeat a 'raised' event every this many samples while active and unacknowledged (0 = never). */
  reAlarm: number;
}

/** What update() reports. */
export const AlarmTransition = { None: 0, Raised: 1, Cleared: 2, Repeated: 3 } as const;
export type AlarmTransition = (typeof AlarmTransition)[keyof typeof AlarmTransition];

const NORMAL = 0;
const PENDING = 1;
const ACTIVE = 2;
const CLEARING = 3;

export class AlarmState {
  private readonly onDelay: number;
  private readonly offDelay: number;
  private readonly deadband: number;
  private readonly reAlarm: number;
  private phase = NORMAL;
  private since = 0;
  private lastAnnounced = 0;
  private announced = false;
  private acked = false;
  private shelvedUntil = -1;
  private heldUntil = -1;
  /** Cleared on the recent estimate while the long one still read high: a raise needs the recent one too. */
  private rearmOnRecent = false;

  constructor(timing: AlarmTiming) {
    for (const k of ['onDelay', 'offDelay', 'reAlarm'] as const) {
      const v = timing[k];
      if (!Number.isInteger(v) || v < 0)
        throw new RangeError(`AlarmState: ${k} must be a whole number of samples ≥ 0, got ${v}`);
    }
    if (!(timing.deadband >= 0) || !Number.isFinite(timing.deadband)) {
      throw new RangeError(`AlarmState: deadband must be a finite number ≥ 0, got ${timing.deadband}`);
    }
    this.onDelay = timing.onDelay;
    this.offDelay = timing.offDelay;
    this.deadband = timing.deadband;
    this.reAlarm = timing.reAlarm;
  }

  /** True while the condition is active (raised and not yet cleared), announced or not. */
  get active(): boolean {
    return this.phase === ACTIVE || this.phase === CLEARING;
  }

  /** True while active and announced: what the event log shows as raised. */
  get raised(): boolean {
    return this.active && this.announced;
  }

  get acknowledged(): boolean {
    return this.acked;
  }

  /**
   * Feeds one evaluation at `sample` (non-decreasing). `recent` is the short-window level (default: `level`).
   * Returns the transition to announce, if any.
   */
  update(sample: number, level: number, threshold: number, recent = level): AlarmTransition {
    const shelved = sample < this.shelvedUntil || sample < this.heldUntil;
    switch (this.phase) {
      case NORMAL:
      case PENDING: {
        if (this.rearmOnRecent && !(level >= threshold - this.deadband)) this.rearmOnRecent = false;
        const up =
          level > threshold && (this.rearmOnRecent ? recent > threshold : !(recent < threshold - this.deadband));
        if (!up) {
          this.phase = NORMAL;
          return AlarmTransition.None;
        }
        if (this.phase === NORMAL) {
          this.phase = PENDING;
          this.since = sample;
        }
        if (sample - this.since < this.onDelay) return AlarmTransition.None;
        this.phase = ACTIVE;
        this.acked = false;
        return this.announce(sample, shelved, AlarmTransition.Raised);
      }
      default: {
        const below = recent < threshold - this.deadband;
        if (!below) {
          this.phase = ACTIVE;
          if (!this.announced) return this.announce(sample, shelved, AlarmTransition.Raised);
          if (this.reAlarm > 0 && !this.acked && !shelved && sample - this.lastAnnounced >= this.reAlarm) {
            this.lastAnnounced = sample;
            return AlarmTransition.Repeated;
          }
          return AlarmTransition.None;
        }
        if (this.phase === ACTIVE) {
          this.phase = CLEARING;
          this.since = sample;
        }
        if (sample - this.since < this.offDelay) return AlarmTransition.None;
        if (sample < this.heldUntil) return AlarmTransition.None; // held: the clear waits for the hold's end
        this.phase = NORMAL;
        this.rearmOnRecent = level >= threshold - this.deadband;
        const wasAnnounced = this.announced;
        this.announced = false;
        this.acked = false;
        return wasAnnounced ? AlarmTransition.Cleared : AlarmTransition.None;
      }
    }
  }

  /** Stops re-alarms for the current activation; the next activation alarms again. */
  acknowledge(): void {
    if (this.active) this.acked = true;
  }

  /** Suppresses announcements until `untilSample`; an alarm still active then is announced at that point. */
  shelve(untilSample: number): void {
    this.shelvedUntil = untilSample;
  }

  /**
   * Holds the state until `untilSample`: a new raise is not announced (as when shelved) and an active alarm does not
   * clear; both happen at the first update after the hold if the level still says so. Only ever extends, and is
   * apart from shelve (a rule's own hold, e.g. during an overload, must not shorten a user's shelving).
   */
  hold(untilSample: number): void {
    if (untilSample > this.heldUntil) this.heldUntil = untilSample;
  }

  private announce(sample: number, shelved: boolean, t: AlarmTransition): AlarmTransition {
    if (shelved) return AlarmTransition.None;
    this.announced = true;
    this.lastAnnounced = sample;
    return t;
  }
}
