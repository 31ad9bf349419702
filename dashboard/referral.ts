// Where densities are referred: at the amplifier input (÷ gain) or at the ADC (as the converter saw them). Samples
// arrive at the input when the rig config divided them by the gain, else at the ADC; a PSD moves by gain².
import type { ChannelFront } from '../protocol/front-end.ts';

export type ReferredTo = 'input' | 'adc';

/** The point a channel's samples arrive at. */
export function receivedAt(front: ChannelFront | undefined): ReferredTo {
  return front?.inputReferred ? 'input' : 'adc';
}

/** Factor on a received PSD to show it at `view`: 1 where the gain is unknown or the point is the same. */
export function psdFactor(front: ChannelFront | undefined, view: ReferredTo): number {
  const g = front?.gain;
  if (g === undefined || view === receivedAt(front)) return 1;
  return view === 'input' ? 1 / (g * g) : g * g;
}

/** The label suffix naming the point, empty where the gain is unknown (then there is only one point). */
export function referralSuffix(front: ChannelFront | undefined, view: ReferredTo): string {
  if (front?.gain === undefined) return '';
  return view === 'input' ? ' (input)' : ' (ADC)';
}
