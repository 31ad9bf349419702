// A floor step confined to a band: white noise through a 4th-order Butterworth band-pass (high-pass at `low`,
// low-pass at `high`), added only for sample instants in [start, end) seconds. The filter runs all the time so
// the step has no start-up transient. Its gain is normalised numerically so the mean added density over
// [low, high] is D², i.e. the added band RMS over [low, high] is D·√(high − low) in expectation.
import { SeededRandom } from '../random.ts';
import { BUTTERWORTH4_Q, BiquadCascade, cookbookSection, type BiquadCoefficients } from './biquad.ts';
import { requirePositive, requireNonNegative, type SynthComponent } from './component.ts';

export interface BandStepOptions {
  /** Added density inside the band, unit/√Hz. */
  density: number;
  /** Band edges, Hz (low may be 0: low-pass only). */
  low: number;
  high: number;
  /** Active span in seconds of sample time, [start, end). */
  start: number;
  end: number;
  sampleRate: number;
  seed: number;
}

export class BandStep implements SynthComponent {
  private readonly rng: SeededRandom;
  private readonly filter: BiquadCascade;
  private readonly sigma: number;
  private readonly first: number;
  private readonly last: number;
  position = 0;

  constructor(o: BandStepOptions) {
    requireNonNegative('band step density', o.density);
    requireNonNegative('band step low edge', o.low);
    requirePositive('sample rate', o.sampleRate);
    if (!(o.high > o.low && o.high < o.sampleRate / 2)) {
      throw new RangeError(`band step: need low < high < Nyquist (${o.sampleRate / 2} Hz), got ${o.low}..${o.high} Hz`);
    }
    if (!(o.end > o.start && o.start >= 0))
      throw new RangeError(`band step: need 0 ≤ start < end, got ${o.start}..${o.end} s`);
    const fs = o.sampleRate;
    const sections: BiquadCoefficients[] = BUTTERWORTH4_Q.map((q) => cookbookSection('lowpass', o.high, q, fs));
    if (o.low > 0) for (const q of BUTTERWORTH4_Q) sections.push(cookbookSection('highpass', o.low, q, fs));
    this.filter = new BiquadCascade(sections);
    // Mean |H|² over [low, high] by the midpoint rule; input white density Din² = 2σ²/fs.
    const points = 2000;
    let mean = 0;
    for (let i = 0; i < points; i++) mean += this.filter.powerGain(o.low + ((o.high - o.low) * (i + 0.5)) / points, fs);
    mean /= points;
    this.sigma = o.density * Math.sqrt(fs / 2 / mean);
    this.first = Math.round(o.start * fs);
    this.last = Math.round(o.end * fs);
    this.rng = new SeededRandom(o.seed);
  }

  addTo(out: Float64Array, offset: number, frames: number): void {
    const rng = this.rng;
    const filter = this.filter;
    const sigma = this.sigma;
    const first = this.first;
    const last = this.last;
    const n0 = this.position;
    for (let i = 0; i < frames; i++) {
      const y = filter.step(sigma * rng.gaussian());
      const n = n0 + i;
      if (n >= first && n < last) out[offset + i] += y;
    }
    this.position += frames;
  }
}
