// Switches a generator on for sample instants in [start, end) seconds: a line that appears during a run (mains
// pickup from a ground loop closing, a switching regulator starting). The generator itself runs all the time, so
// its phase (and a mains drift) is the same as if it had always been there.
import type { SynthComponent } from '../../dsp/synth/component.ts';

export class GatedComponent implements SynthComponent {
  private scratch = new Float64Array(1024);
  private readonly first: number;
  private readonly last: number;

  constructor(
    private readonly inner: SynthComponent,
    start: number,
    end: number,
    sampleRate: number,
  ) {
    if (!(start >= 0) || !(end > start)) throw new RangeError(`gate: need 0 ≤ start < end, got ${start}..${end} s`);
    this.first = Math.round(start * sampleRate);
    this.last = Number.isFinite(end) ? Math.round(end * sampleRate) : Infinity;
  }

  get position(): number {
    return this.inner.position;
  }

  addTo(out: Float64Array, offset: number, frames: number): void {
    if (this.scratch.length < frames) this.scratch = new Float64Array(frames); // only if a caller's block grows
    const s = this.scratch;
    s.fill(0, 0, frames);
    const n0 = this.inner.position;
    this.inner.addTo(s, 0, frames);
    const first = this.first;
    const last = this.last;
    for (let i = 0; i < frames; i++) {
      const n = n0 + i;
      if (n >= first && n < last) out[offset + i] += s[i];
    }
  }
}
