// What one alarm records over its life, in sample time, beside its state machine: an onset estimate, when its
// recent (short-window) estimate holds only post-onset data ("settled"), and the peak of that estimate.
//
// Onset: the first evaluation of the current rise at which the recent level stood above threshold − deadband. The
// fault cannot have begun after it (the recent estimate had already moved), so once the recent window's first
// sample lies at or after it, the window holds only post-onset data: that is the settled condition. Peaks follow
// the recent estimate (the long average lags and under-reads a short fault).

export class AlarmLife {
  /** Sample of the current rise's onset estimate (−1: none). */
  onset = -1;
  /** Sample the alarm was raised (announced) at (−1: not raised). */
  raisedAt = -1;
  settled = false;
  peakLevel = -Infinity;
  peakAmplitude = 0;
  peakSample = -1;

  /** Every evaluation, before the state machine: tracks the onset estimate while the alarm is not active. */
  observe(sample: number, recentLevel: number, armLevel: number, active: boolean): void {
    if (active) return;
    if (recentLevel > armLevel) {
      if (this.onset < 0) this.onset = sample;
    } else this.onset = -1;
  }

  raised(sample: number): void {
    this.raisedAt = sample;
    if (this.onset < 0 || this.onset > sample) this.onset = sample;
    this.settled = false;
    this.peakLevel = -Infinity;
    this.peakAmplitude = 0;
    this.peakSample = -1;
  }

  /** While raised: keeps the peak of the recent estimate, and the amplitude at that same instant (0 for rules
   * without one), so the pair describes one moment: the largest amplitude seen can belong to another (an overload
   * lifts a line's amplitude and its local floor together, so its level over the floor does not peak there). */
  track(sample: number, recentLevel: number, amplitude = 0): void {
    if (this.raisedAt < 0) return;
    if (recentLevel > this.peakLevel) {
      this.peakLevel = recentLevel;
      this.peakSample = sample;
      this.peakAmplitude = amplitude;
    }
  }

  /** True once, when the recent window (first sample `windowFirstSample`) starts at or after the onset. */
  settlesNow(windowFirstSample: number): boolean {
    if (this.raisedAt < 0 || this.settled || windowFirstSample < this.onset) return false;
    this.settled = true;
    return true;
  }

  cleared(): void {
    this.raisedAt = -1;
    this.onset = -1;
    this.settled = false;
  }
}
