// Where densities are referred: at the amplifier input (÷ gain) or at the ADC (as the converter saw them). Samples
// arrive at the input when the rig config divided them by the gain, else at the ADC; a PSD moves by gain².
import type { ChannelFront } from '../protocol/front-end.ts';

export type ReferredTo = 'input' | 'adc';

/** The point a channel's samples arrive at. */
export function receivedAt(front: ChannelFront | undefined): ReferredTo {
  return front?.inputReferred ? 'input' : 'adc';
}

/** Factor on a PSD referred to `from` that refers it to `to`: 1 where the gain is unknown or the point is the same. */
export function psdFactorBetween(front: ChannelFront | undefined, from: ReferredTo, to: ReferredTo): number {
  const g = front?.gain;
  if (g === undefined || from === to) return 1;
  return to === 'input' ? 1 / (g * g) : g * g;
}

/** Factor on a received PSD to show it at `view`. */
export function psdFactor(front: ChannelFront | undefined, view: ReferredTo): number {
  return psdFactorBetween(front, receivedAt(front), view);
}

/** The label suffix naming the point, empty where the gain is unknown (then there is only one point). */
export function referralSuffix(front: ChannelFront | undefined, view: ReferredTo): string {
  if (front?.gain === undefined) return '';
  return view === 'input' ? ' (input)' : ' (ADC)';
}
