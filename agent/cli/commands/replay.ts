// `floorline replay FILE`: the live pipeline fed from a recording, at real time, N× or as fast as it goes.
import { UNIT_FLAG } from './unit-flag.ts';
import { createWriteStream } from 'node:fs';
import { defineCommand, defineFlags, type ParsedArgs } from '../args.ts';
import { threadsFlag } from './threads-flag.ts';
import { InputError, UsageError } from '../../errors.ts';
import {
  ALARM_FLAGS,
  PIPELINE_FLAGS,
  RECORDING_FLAGS,
  monitorOptionsFromFlags,
  calibratedSource,
} from './monitor-flags.ts';
import { CONFIG_FLAG, readConfigFlag } from '../../config/apply-config.ts';
import { HISTORY_FLAGS } from '../../store/cli-flags.ts';
import { snapshotToJsonLine } from '../../pipeline/snapshot-digest.ts';
import { ReplaySource, parseSpeed } from '../../sources/replay.ts';
import { SERVER_FLAGS } from '../../server/cli-flags.ts';
import { startMonitor } from '../../monitor/monitor.ts';
import type { MonitorPart } from '../../monitor/parts.ts';

/** Writes every spectrum snapshot as one JSON line (--snapshots-out). */
function snapshotWriter(path: string): MonitorPart {
  const out = createWriteStream(path);
  return {
    name: 'snapshots-out',
    onSnapshot: (s) => void out.write(snapshotToJsonLine(s) + '\n'),
    close: () => new Promise<void>((r) => out.end(r)),
  };
}

async function runReplay(args: ParsedArgs<typeof REPLAY_FLAGS>): Promise<number> {
  const [file] = args.positionals;
  const rig = readConfigFlag(args, replayCommand.flags);
  const f = args.flags;
  const speed = parseSpeed(f.speed);
  if (speed === undefined) {
    throw new UsageError(
      `floorline replay: --speed '${String(f.speed)}' is not 1, a positive number or max; e.g. --speed 10 or --speed max.`,
    );
  }
  if (f.follow && f.loop) throw new UsageError('floorline replay: give --follow or --loop, not both.');
  if (f['start-sample'] !== undefined && f['start-time'] !== undefined) {
    throw new UsageError('floorline replay: give --start-sample or --start-time, not both.');
  }
  const source = new ReplaySource(file, {
    speed,
    loop: f.loop,
    follow: f.follow,
    startSample: f['start-sample'],
    startTime: f['start-time'],
    scale: f.scale,
    unit: f.unit,
  });
  const snapshotsOut = f['snapshots-out'];
  const options = await monitorOptionsFromFlags(args, 'replay', {
    mode: 'lossless',
    rig,
    sourceLabel: file,
    replay: source,
    frames: () => source.fileInfo?.frames,
    parts: snapshotsOut ? [snapshotWriter(snapshotsOut)] : [],
  });
  let monitor;
  try {
    monitor = await startMonitor(calibratedSource(source, rig, 'replay'), options);
  } catch (err) {
    const e = err as Error & { exitCode?: number };
    if (e instanceof UsageError) throw err;
    if (e instanceof RangeError) throw new UsageError(`floorline replay: ${e.message}`);
    throw new InputError(`floorline replay: cannot replay ${file}: ${e.message}`);
  }
  for (const w of source.fileInfo?.warnings ?? []) process.stderr.write(`floorline replay: warning: ${w}\n`);
  await source.done;
  await monitor.finished;
  return 0;
}

const REPLAY_FLAGS = defineFlags([
  CONFIG_FLAG,
  {
    name: 'speed',
    kind: 'string',
    value: '1|N|max',
    default: '1',
    help: 'replay speed: 1 = real time, N times faster, or max',
  },
  { name: 'loop', kind: 'boolean', help: 'start again at the end (sample time keeps counting)' },
  {
    name: 'follow',
    kind: 'boolean',
    help: 'go on with the next files of a rotated recording (rec-…-sN.wav), as the live run saw them',
  },
  {
    name: 'start-sample',
    kind: 'number',
    value: 'N',
    integer: true,
    min: 0,
    help: 'start at this sample index (as printed in events)',
  },
  { name: 'start-time', kind: 'number', value: 'S', min: 0, help: 'start at this sample time t in seconds' },
  {
    name: 'scale',
    kind: 'number',
    value: 'V',
    min: 0,
    help: 'volts per full scale for integer PCM or unlabelled float files',
  },
  UNIT_FLAG,
  { name: 'no-server', kind: 'boolean', help: 'do not serve the dashboard; print to the terminal only' },
  {
    name: 'snapshots-out',
    kind: 'string',
    value: 'FILE',
    help: 'write every spectrum snapshot as JSON Lines (large)',
  },
  { name: 'quiet', kind: 'boolean', help: 'print only the summary at the end' },
  ...SERVER_FLAGS,
  ...HISTORY_FLAGS,
  ...ALARM_FLAGS,
  ...RECORDING_FLAGS,
  threadsFlag,
  ...PIPELINE_FLAGS,
]);

export const replayCommand = defineCommand({
  name: 'replay',
  summary: 'run the live pipeline on a recording (WAV), in real time, N× faster or as fast as possible',
  details: [
    "Spectra, band values and events are stamped in the recording's sample time, so a replay at any speed",
    'gives the same results at the same sample indices as the live run that made the recording.',
    'Example: floorline replay floorline-data/recordings/rig.wav --speed max --no-server',
  ].join('\n'),
  positionals: [
    {
      name: 'FILE',
      help: 'recording to replay (our float32 WAV, or int16/24/32 or float WAV from elsewhere)',
      required: true,
    },
  ],
  flags: REPLAY_FLAGS,
  run: runReplay,
});
