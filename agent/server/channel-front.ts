// The front end of one channel for the dashboard's context message: gain and budget from the rig config's
// calibration or the recording's sidecar, the converter step and full scale where known. Checked against the
// protocol's own validator before it is sent, so the page never receives a shape it would refuse.
import type { ChannelInfo } from '../../protocol/stream.ts';
import { channelFrontProblem, type ChannelFront } from '../../protocol/front-end.ts';

export function channelFrontOf(ch: ChannelInfo): ChannelFront | undefined {
  const g = ch.calibration?.gain ?? ch.frontEnd?.gain;
  const gain = g !== undefined && g > 0 ? g : undefined;
  const inputReferred = ch.calibration?.inputReferred === true && gain !== undefined;
  // Full scale in received units; input-referred samples were divided by the gain, the ADC saw gain × that.
  const received = ch.fullScaleCounts * ch.scale;
  const fullScale = Number.isFinite(received) && received > 0 ? received * (inputReferred ? gain! : 1) : undefined;
  const lsb = ch.frontEnd?.lsb;
  const front: ChannelFront = {
    ...(gain !== undefined ? { gain } : {}),
    inputReferred,
    ...(ch.frontEnd?.budget ? { budget: ch.frontEnd.budget } : {}),
    ...(lsb !== undefined && lsb > 0 ? { lsb } : {}),
    ...(fullScale !== undefined ? { fullScale } : {}),
  };
  // Full scale alone is enough: the page offers dBFS/√Hz with it.
  if (gain === undefined && !front.budget && front.lsb === undefined && front.fullScale === undefined) return undefined;
  return channelFrontProblem(front) === null ? front : undefined;
}
