// White Gaussian noise of a one-sided density D (unit/√Hz): variance σ² = D² · fs / 2, since a one-sided PSD of
// white noise sampled at fs is 2σ²/fs (common practice; it is what scipy.signal.welch reports for it).
import { SeededRandom } from '../random.ts';
import { requirePositive, requireNonNegative, type SynthComponent } from './component.ts';

export class WhiteNoise implements SynthComponent {
  private readonly rng: SeededRandom;
  private readonly sigma: number;
  position = 0;

  constructor(options: { density: number; sampleRate: number; seed: number }) {
    requireNonNegative('white noise density', options.density);
    requirePositive('sample rate', options.sampleRate);
    this.rng = new SeededRandom(options.seed);
    this.sigma = options.density * Math.sqrt(options.sampleRate / 2);
  }

  addTo(out: Float64Array, offset: number, frames: number): void {
    const rng = this.rng;
    const sigma = this.sigma;
    for (let i = 0; i < frames; i++) out[offset + i] += sigma * rng.gaussian();
    this.position += frames;
  }
}
