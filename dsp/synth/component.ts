// A signal generator of the simulator: adds its contribution for the next `frames` samples into out[offset..].
// Every generator is a per-sample recursion or a closed form in the absolute sample index, so the samples do not
// depend on how the run is cut into blocks. Constructors validate and allocate; addTo() allocates nothing.
export interface SynthComponent {
  /** Absolute index of the next sample this generator will add. */
  readonly position: number;
  addTo(out: Float64Array, offset: number, frames: number): void;
}

export function requirePositive(what: string, value: number): void {
  if (!(Number.isFinite(value) && value > 0)) throw new RangeError(`${what} must be a positive number, got ${value}`);
}

export function requireNonNegative(what: string, value: number): void {
  if (!(Number.isFinite(value) && value >= 0)) throw new RangeError(`${what} must be a number ≥ 0, got ${value}`);
}

/** Mixes a seed with a stream number into an independent 32-bit seed (splitmix32 finaliser, Vigna). */
export function deriveSeed(seed: number, stream: number): number {
  let z = (Math.imul(seed >>> 0, 0x9e3779b1) + Math.imul(stream >>> 0, 0x85ebca77) + 0x165667b1) >>> 0;
  z = Math.imul(z ^ (z >>> 16), 0x85ebca6b) >>> 0;
  z = Math.imul(z ^ (z >>> 13), 0xc2b2ae35) >>> 0;
  return (z ^ (z >>> 16)) >>> 0;
}
