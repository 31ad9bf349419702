// Filter state for a constant input held since forever (the state scipy.signal.sosfilt_zi(sos)·x0 gives):
// per section in transposed direct form II with x = u and y = H(1)·u constant,
// z2 = b2·u − a2·y and z1 = b1·u − a1·y + z2; the output u of one section is the input of the next.
// Starting a 0.1 Hz high-pass this way keeps a sensor's DC offset from ringing through the first seconds.
import type { SosFilter } from './butterworth.ts';

export function steadyStateInto(filter: SosFilter, input: number, state: Float64Array): void {
  const c = filter.sos;
  let u = input;
  for (let s = 0; s < filter.sections; s++) {
    const k = 6 * s;
    const dc = (c[k] + c[k + 1] + c[k + 2]) / (1 + c[k + 4] + c[k + 5]);
    const y = dc * u;
    const z2 = c[k + 2] * u - c[k + 5] * y;
    state[2 * s + 1] = z2;
    state[2 * s] = c[k + 1] * u - c[k + 4] * y + z2;
    u = y;
  }
}
