// What a log-frequency chart needs from a LiveLogFrequency, in one reusable object: amplitude density, its
// confidence band, the resolution bandwidth and averages per point, stamped in sample time. Pure data, so the
// agent can send it and the dashboard can draw it (uPlot series: frequency vs asd, lower, upper).
import type { LiveLogFrequency } from './live-log-frequency.ts';
import { densityIntervalFactors } from './confidence.ts';

export interface LogFrequencyFrame {
  /** Absolute index of the last sample pushed, and its sample time. */
  sample: number;
  t: number;
  frequency: Float64Array;
  /** unit/√Hz; NaN where a point has no completed segment yet. */
  asd: Float64Array;
  /** Confidence band of the ASD at `level` (chi-square, from the equivalent averages). */
  asdLower: Float64Array;
  asdUpper: Float64Array;
  level: number;
  rbwHz: Float64Array;
  averages: Float64Array;
}

export class LogFrequencyFrameBuilder {
  readonly frame: LogFrequencyFrame;
  private readonly live: LiveLogFrequency;
  private readonly psd: Float64Array;
  private readonly eq: Float64Array;
  // The quantiles only change when a point's averages change: cached per point.
  private readonly lastDof: Float64Array;
  private readonly lowFactor: Float64Array;
  private readonly highFactor: Float64Array;

  constructor(live: LiveLogFrequency, level = 0.95) {
    densityIntervalFactors(2, level); // validates the level
    const n = live.count;
    this.live = live;
    this.psd = new Float64Array(n);
    this.eq = new Float64Array(n);
    this.lastDof = new Float64Array(n).fill(-1);
    this.lowFactor = new Float64Array(n);
    this.highFactor = new Float64Array(n);
    this.frame = {
      sample: -1,
      t: 0,
      frequency: live.frequency,
      asd: new Float64Array(n),
      asdLower: new Float64Array(n),
      asdUpper: new Float64Array(n),
      level,
      rbwHz: live.rbwHz,
      averages: new Float64Array(n),
    };
  }

  /** Refreshes the frame from the estimator's current state and returns it (the same object every time). */
  update(): LogFrequencyFrame {
    const live = this.live;
    const f = this.frame;
    live.psd(this.psd);
    live.equivalentAverages(this.eq);
    live.averagesUsed(f.averages);
    for (let p = 0; p < live.count; p++) {
      const dof = 2 * this.eq[p];
      if (dof !== this.lastDof[p]) {
        const k = densityIntervalFactors(dof, f.level);
        this.lowFactor[p] = Math.sqrt(k.lower);
        this.highFactor[p] = Math.sqrt(k.upper);
        this.lastDof[p] = dof;
      }
      const a = Math.sqrt(this.psd[p]);
      f.asd[p] = a;
      f.asdLower[p] = a * this.lowFactor[p];
      f.asdUpper[p] = a * this.highFactor[p];
    }
    f.sample = live.lastSample;
    f.t = live.lastSample / live.sampleRate;
    return f;
  }
}
