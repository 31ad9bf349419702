// The one place where replay and demo bring a baseline into the units of the rig config's calibration.
import { rescaleBaselineForReplay } from '../../config/calibration.ts';
import type { ChannelConfig } from '../../config/rig-config.ts';
import type { MonitorOptions } from '../../monitor/options.ts';
import type { ReplaySource } from '../../sources/replay.ts';

type LoadedBaseline = NonNullable<MonitorOptions['baseline']>;

/**
 * A baseline taken from a recording before calibration, brought into the units the config's calibration gives the
 * replay of it, and the changed channels said under the command's name: otherwise an input-referred channel would
 * be compared with a floor 40 dB (a gain of 100) above its own, and every line on it would go unreported. Channels
 * the recording already carries a calibration for keep their baseline (the config is not applied to them).
 */
export async function baselineInConfigUnits(
  loaded: LoadedBaseline,
  channels: readonly ChannelConfig[] | undefined,
  replay: ReplaySource,
  command: string,
): Promise<LoadedBaseline> {
  if (!channels?.length) return loaded;
  const r = rescaleBaselineForReplay(loaded.baseline, channels, await replay.calibratedChannels());
  if (r.changed.length)
    process.stdout.write(`floorline ${command}: baseline brought into the config's units: ${r.changed.join(', ')}\n`);
  return { ...loaded, baseline: r.baseline };
}
