// Events of a channel whose calibration divides by the front-end gain quote amplitudes at the amplifier input, not
// at the converter. The event says so, in a field and in its text, so a test record never mixes the two points.
import type { FloorlineEvent } from '../../protocol/events.ts';
import type { StreamInfo } from '../../protocol/stream.ts';

export function markInputReferred(e: FloorlineEvent, info: StreamInfo | null | undefined): void {
  if (e.channel === undefined || !info || e.referredTo !== undefined) return;
  const ch = info.channels.find((c) => c.name === e.channel);
  const cal = ch?.calibration;
  if (!cal?.inputReferred || cal.gain === undefined) return;
  e.referredTo = 'input';
  if (e.amplitude !== undefined || e.peakAmplitude !== undefined)
    e.detail += ` (amplitudes referred to the input: the converter reads ${cal.gain}× these)`;
}
