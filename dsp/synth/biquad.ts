// Second-order sections from R. Bristow-Johnson's "Audio EQ Cookbook" (LPF and HPF), run in transposed direct
// form II. A 4th-order Butterworth response is two sections with Q = 1/(2cos(π/8)) and 1/(2cos(3π/8))
// (0.5412 and 1.3066; common practice for cascading Butterworth biquads).

export const BUTTERWORTH4_Q = [1 / (2 * Math.cos(Math.PI / 8)), 1 / (2 * Math.cos((3 * Math.PI) / 8))] as const;

export interface BiquadCoefficients {
  b0: number;
  b1: number;
  b2: number;
  a1: number;
  a2: number;
}

export function cookbookSection(
  kind: 'lowpass' | 'highpass',
  frequency: number,
  q: number,
  sampleRate: number,
): BiquadCoefficients {
  if (!(frequency > 0 && frequency < sampleRate / 2)) {
    throw new RangeError(`${kind} corner ${frequency} Hz must lie between 0 and Nyquist (${sampleRate / 2} Hz)`);
  }
  const w0 = (2 * Math.PI * frequency) / sampleRate;
  const cos = Math.cos(w0);
  const alpha = Math.sin(w0) / (2 * q);
  const a0 = 1 + alpha;
  const k = kind === 'lowpass' ? (1 - cos) / 2 : (1 + cos) / 2;
  const mid = kind === 'lowpass' ? 1 - cos : -(1 + cos);
  return { b0: k / a0, b1: mid / a0, b2: k / a0, a1: (-2 * cos) / a0, a2: (1 - alpha) / a0 };
}

/** |H(e^{jω})|² of one section at frequency f. */
export function sectionPowerGain(s: BiquadCoefficients, f: number, sampleRate: number): number {
  const w = (2 * Math.PI * f) / sampleRate;
  const c1 = Math.cos(w);
  const s1 = Math.sin(w);
  const c2 = Math.cos(2 * w);
  const s2 = Math.sin(2 * w);
  const nr = s.b0 + s.b1 * c1 + s.b2 * c2;
  const ni = -(s.b1 * s1 + s.b2 * s2);
  const dr = 1 + s.a1 * c1 + s.a2 * c2;
  const di = -(s.a1 * s1 + s.a2 * s2);
  return (nr * nr + ni * ni) / (dr * dr + di * di);
}

/** A cascade of sections with its state, processing in place. */
export class BiquadCascade {
  private readonly c: Float64Array; // 5 coefficients per section
  private readonly z: Float64Array; // 2 state values per section
  readonly sections: readonly BiquadCoefficients[];

  constructor(sections: readonly BiquadCoefficients[]) {
    this.sections = sections;
    this.c = new Float64Array(5 * sections.length);
    this.z = new Float64Array(2 * sections.length);
    sections.forEach((s, k) => this.c.set([s.b0, s.b1, s.b2, s.a1, s.a2], 5 * k));
  }

  powerGain(f: number, sampleRate: number): number {
    let g = 1;
    for (const s of this.sections) g *= sectionPowerGain(s, f, sampleRate);
    return g;
  }

  /** Filters one sample. */
  step(x: number): number {
    const c = this.c;
    const z = this.z;
    const n = this.sections.length;
    let v = x;
    for (let k = 0; k < n; k++) {
      const o = 5 * k;
      const y = c[o] * v + z[2 * k];
      z[2 * k] = c[o + 1] * v - c[o + 3] * y + z[2 * k + 1];
      z[2 * k + 1] = c[o + 2] * v - c[o + 4] * y;
      v = y;
    }
    return v;
  }
}
