// Mains pickup: a fundamental near 50 or 60 Hz and its harmonics, with a slowly drifting fundamental
// f(t) = f0 + span·sin(2πt/P). The phase is the closed-form integral φ(t) = 2π·(f0·t + span·P/(2π)·(1 − cos 2πt/P)),
// so it is exact at every sample index whatever the block size; harmonic k is sin(k·φ), built by the angle-
// addition recursion from sin φ and cos φ.
import { requirePositive, requireNonNegative, type SynthComponent } from './component.ts';

export interface MainsOptions {
  /** Nominal fundamental f0, Hz (50 or 60 in practice). */
  fundamental: number;
  /** RMS of harmonic 1, 2, 3, … (index 0 is the fundamental). */
  harmonics: readonly number[];
  sampleRate: number;
  /** Peak deviation of the fundamental, Hz (default 0). */
  driftSpan?: number;
  /** Period of the drift, s (default 60). */
  driftPeriod?: number;
}

export class MainsPickup implements SynthComponent {
  private readonly peaks: Float64Array;
  private readonly f0: number;
  private readonly span: number;
  private readonly period: number;
  private readonly fs: number;
  position = 0;

  constructor(o: MainsOptions) {
    requirePositive('mains fundamental', o.fundamental);
    requirePositive('sample rate', o.sampleRate);
    if (o.harmonics.length === 0)
      throw new RangeError('mains pickup needs at least one harmonic amplitude (RMS of the fundamental)');
    o.harmonics.forEach((h, k) => requireNonNegative(`mains harmonic ${k + 1} rms`, h));
    const span = o.driftSpan ?? 0;
    const period = o.driftPeriod ?? 60;
    requireNonNegative('mains drift span', span);
    requirePositive('mains drift period', period);
    const top = o.harmonics.length * (o.fundamental + span);
    if (top >= o.sampleRate / 2)
      throw new RangeError(
        `mains harmonic ${o.harmonics.length} reaches ${top} Hz, above Nyquist (${o.sampleRate / 2} Hz); list fewer harmonics`,
      );
    this.peaks = Float64Array.from(o.harmonics, (h) => h * Math.SQRT2);
    this.f0 = o.fundamental;
    this.span = span;
    this.period = period;
    this.fs = o.sampleRate;
  }

  /** Instantaneous fundamental at sample n, Hz. */
  frequencyAt(n: number): number {
    return this.f0 + this.span * Math.sin((2 * Math.PI * n) / this.fs / this.period);
  }

  addTo(out: Float64Array, offset: number, frames: number): void {
    const peaks = this.peaks;
    const K = peaks.length;
    const f0 = this.f0;
    const fs = this.fs;
    const P = this.period;
    const driftCycles = (this.span * P) / (2 * Math.PI);
    const n0 = this.position;
    for (let i = 0; i < frames; i++) {
      const t = (n0 + i) / fs;
      const whole = f0 * t;
      const cycles = whole - Math.floor(whole) + driftCycles * (1 - Math.cos((2 * Math.PI * t) / P));
      const phi = 2 * Math.PI * (cycles - Math.floor(cycles));
      const s1 = Math.sin(phi);
      const c1 = Math.cos(phi);
      let sk = s1;
      let ck = c1;
      let v = peaks[0] * s1;
      for (let k = 1; k < K; k++) {
        const s = sk * c1 + ck * s1;
        ck = ck * c1 - sk * s1;
        sk = s;
        v += peaks[k] * sk;
      }
      out[offset + i] += v;
    }
    this.position += frames;
  }
}
