// The masks message for the dashboard: for each channel of the stream, the mask the live limit rule judges it by
// (its own, else the one given for every channel), in the unit of the file or of the channel, referred to the point
// the rule compares at (the received samples: the amplifier input when they were divided by the gain, else the
// ADC). Checked against the protocol's own validator before it is sent, as the channel fronts are.
import { basename } from 'node:path';
import type { StreamInfo } from '../../protocol/stream.ts';
import { limitMasksProblem, type ChannelLimitMask, type LimitMasksMessage } from '../../protocol/limit-masks.ts';
import { channelFrontOf } from './channel-front.ts';

/** The monitor's masks by channel name ('*' = every channel), as read from their files (structurally a LimitMask). */
export type MaskSet = Record<
  string,
  { frequency: ArrayLike<number>; limit: ArrayLike<number>; path: string; unit?: string }
>;

/** The message, or a reason it cannot be sent (the page would refuse it). */
export function limitMasksMessage(
  info: StreamInfo | null,
  masks: MaskSet | undefined,
): { message: LimitMasksMessage } | { problem: string } {
  const out: ChannelLimitMask[] = [];
  for (const ch of info?.channels ?? []) {
    const m = masks?.[ch.name] ?? masks?.['*'];
    if (!m) continue;
    out.push({
      channel: ch.name,
      unit: m.unit ?? ch.unit,
      referredTo: channelFrontOf(ch)?.inputReferred ? 'input' : 'adc',
      frequency: Array.from(m.frequency),
      limit: Array.from(m.limit),
      file: basename(m.path),
    });
  }
  const message: LimitMasksMessage = { type: 'masks', masks: out };
  const problem = limitMasksProblem(message);
  return problem === null ? { message } : { problem };
}
