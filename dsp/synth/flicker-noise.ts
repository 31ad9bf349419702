// 1/f (flicker, "pink") noise with one-sided density D·√(fc/f): it equals D at the corner fc, so beside a white
// floor of density D the 1/f corner sits at fc. Made by white noise through a cascade of first-order shelf
// sections, pole and zero interlaced with two sections per decade (Keshner 1982, "1/f noise", Proc. IEEE 70(3));
// each section is discretised by the bilinear transform with prewarped corners. Below `lowest` Hz the density
// levels off (finite variance); the level is normalised numerically over the span where the slope is 1/f.
import { SeededRandom } from '../random.ts';
import { requirePositive, requireNonNegative, type SynthComponent } from './component.ts';

const SECTIONS_PER_DECADE = 2;

export interface FlickerOptions {
  /** Density at the corner, unit/√Hz. */
  density: number;
  /** Corner frequency fc, Hz: the density is D·√(fc/f). */
  corner: number;
  sampleRate: number;
  seed: number;
  /** Lowest frequency with a 1/f slope, Hz (default 0.01). */
  lowest?: number;
}

export class FlickerNoise implements SynthComponent {
  private readonly rng: SeededRandom;
  private readonly sigma: number;
  private readonly b0: Float64Array;
  private readonly b1: Float64Array;
  private readonly a1: Float64Array;
  private readonly x1: Float64Array; // previous input of each section
  private readonly y1: Float64Array; // previous output of each section
  position = 0;

  constructor(o: FlickerOptions) {
    requireNonNegative('flicker noise density', o.density);
    requirePositive('flicker noise corner', o.corner);
    requirePositive('sample rate', o.sampleRate);
    const fs = o.sampleRate;
    const lowest = o.lowest ?? 0.01;
    requirePositive('flicker noise lowest frequency', lowest);
    if (lowest >= fs / 200)
      throw new RangeError(`flicker noise: lowest frequency ${lowest} Hz must be below fs/200 = ${fs / 200} Hz`);
    const r = Math.pow(10, 1 / SECTIONS_PER_DECADE);
    const K = 2 * fs;
    const warp = (f: number): number => K * Math.tan((Math.PI * f) / fs);
    const b0: number[] = [];
    const b1: number[] = [];
    const a1: number[] = [];
    for (let p = lowest; p * Math.sqrt(r) < 0.45 * fs; p *= r) {
      const wp = warp(p);
      const wz = warp(p * Math.sqrt(r));
      const a0 = 1 + K / wp;
      b0.push((1 + K / wz) / a0);
      b1.push((1 - K / wz) / a0);
      a1.push((1 - K / wp) / a0);
    }
    this.b0 = Float64Array.from(b0);
    this.b1 = Float64Array.from(b1);
    this.a1 = Float64Array.from(a1);
    this.x1 = new Float64Array(b0.length);
    this.y1 = new Float64Array(b0.length);
    // Normalise: geometric mean of |H(f)|²·f over [10·lowest, fs/20] (where the cascade follows 1/f) → G;
    // output one-sided PSD is (2σ²/fs)|H|², wanted D²·fc/f, so σ² = D²·fc·fs / (2G).
    const lo = Math.log(10 * lowest);
    const hi = Math.log(fs / 20);
    const points = 400;
    let sumLog = 0;
    for (let i = 0; i < points; i++) {
      const f = Math.exp(lo + ((hi - lo) * (i + 0.5)) / points);
      sumLog += Math.log(this.powerGain(f, fs) * f);
    }
    const G = Math.exp(sumLog / points);
    this.sigma = Math.sqrt((o.density * o.density * o.corner * fs) / (2 * G));
    this.rng = new SeededRandom(o.seed);
  }

  /** |H(e^{j2πf/fs})|² of the cascade. */
  powerGain(f: number, fs: number): number {
    const w = (2 * Math.PI * f) / fs;
    const c = Math.cos(w);
    const s = Math.sin(w);
    let g = 1;
    for (let k = 0; k < this.b0.length; k++) {
      // (b0 + b1 e^{-jw}) / (1 + a1 e^{-jw})
      const nr = this.b0[k] + this.b1[k] * c;
      const ni = -this.b1[k] * s;
      const dr = 1 + this.a1[k] * c;
      const di = -this.a1[k] * s;
      g *= (nr * nr + ni * ni) / (dr * dr + di * di);
    }
    return g;
  }

  addTo(out: Float64Array, offset: number, frames: number): void {
    const rng = this.rng;
    const sigma = this.sigma;
    const b0 = this.b0;
    const b1 = this.b1;
    const a1 = this.a1;
    const x1 = this.x1;
    const y1 = this.y1;
    const n = b0.length;
    for (let i = 0; i < frames; i++) {
      let v = sigma * rng.gaussian();
      for (let k = 0; k < n; k++) {
        const y = b0[k] * v + b1[k] * x1[k] - a1[k] * y1[k];
        x1[k] = v;
        y1[k] = y;
        v = y;
      }
      out[offset + i] += v;
    }
    this.position += frames;
  }
}
