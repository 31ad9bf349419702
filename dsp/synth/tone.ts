// A sine tone of a given RMS (peak = RMS·√2), frequency and phase, as a closed form in the sample index.
import { requirePositive, requireNonNegative, type SynthComponent } from './component.ts';

export class Tone implements SynthComponent {
  private readonly cyclesPerSample: number;
  private readonly peak: number;
  private readonly phase: number;
  position = 0;

  constructor(o: { frequency: number; rms: number; sampleRate: number; phaseDeg?: number }) {
    requirePositive('sample rate', o.sampleRate);
    requireNonNegative('tone frequency', o.frequency);
    requireNonNegative('tone rms', o.rms);
    if (o.frequency >= o.sampleRate / 2)
      throw new RangeError(`tone frequency ${o.frequency} Hz must be below Nyquist (${o.sampleRate / 2} Hz)`);
    this.cyclesPerSample = o.frequency / o.sampleRate;
    this.peak = o.rms * Math.SQRT2;
    this.phase = (((o.phaseDeg ?? 0) % 360) * Math.PI) / 180;
  }

  addTo(out: Float64Array, offset: number, frames: number): void {
    const cps = this.cyclesPerSample;
    const peak = this.peak;
    const phase = this.phase;
    const n0 = this.position;
    for (let i = 0; i < frames; i++) {
      const cycles = cps * (n0 + i);
      out[offset + i] += peak * Math.sin(2 * Math.PI * (cycles - Math.floor(cycles)) + phase);
    }
    this.position += frames;
  }
}
