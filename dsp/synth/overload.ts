// An overload episode: a large sine (peak in units) added for instants in [start, end) seconds, enough to drive
// the converter into its end codes so that quantise() clips it, as a real overdriven front end does.
import { requirePositive, requireNonNegative, type SynthComponent } from './component.ts';

export class Overload implements SynthComponent {
  private readonly first: number;
  private readonly last: number;
  private readonly cyclesPerSample: number;
  private readonly peak: number;
  position = 0;

  constructor(o: { start: number; end: number; frequency: number; peak: number; sampleRate: number }) {
    requirePositive('sample rate', o.sampleRate);
    requirePositive('overload frequency', o.frequency);
    requireNonNegative('overload peak', o.peak);
    if (!(o.end > o.start && o.start >= 0))
      throw new RangeError(`overload: need 0 ≤ start < end, got ${o.start}..${o.end} s`);
    if (o.frequency >= o.sampleRate / 2)
      throw new RangeError(`overload frequency ${o.frequency} Hz must be below Nyquist`);
    this.first = Math.round(o.start * o.sampleRate);
    this.last = Math.round(o.end * o.sampleRate);
    this.cyclesPerSample = o.frequency / o.sampleRate;
    this.peak = o.peak;
  }

  addTo(out: Float64Array, offset: number, frames: number): void {
    const n0 = this.position;
    const lo = Math.max(0, this.first - n0);
    const hi = Math.min(frames, this.last - n0);
    const cps = this.cyclesPerSample;
    const peak = this.peak;
    for (let i = lo; i < hi; i++) {
      const cycles = cps * (n0 + i);
      out[offset + i] += peak * Math.sin(2 * Math.PI * (cycles - Math.floor(cycles)));
    }
    this.position += frames;
  }
}
