// `floorline replay FILE`: the live pipeline fed from a recording, at real time, N× or as fast as it goes.
import { createWriteStream } from 'node:fs';
import type { CommandSpec, ParsedArgs } from '../args.ts';
import { InputError, UsageError } from '../usage-error.ts';
import { ALARM_FLAGS, PIPELINE_FLAGS, RECORDING_FLAGS, alarmDetectors, readAlarmFlags, readPipelineFlags, readRecordingFlags } from './pipeline-flags.ts';
import { Pipeline } from '../../pipeline/pipeline.ts';
import { snapshotToJsonLine } from '../../pipeline/snapshot-digest.ts';
import { ReplaySource, parseSpeed } from '../../sources/replay.ts';
import { startSession } from './session.ts';
import { HISTORY_FLAGS, historyFromArgs, withSource } from '../../store/cli-flags.ts';
import type { Detector } from '../../pipeline/types.ts';
import { SERVER_FLAGS } from '../../server/cli-flags.ts';
import { serveDashboard } from '../../server/serve.ts';
import { CONFIG_FLAG, readConfigFlag } from '../../config/apply-config.ts';
import { CalibratedSource } from '../../config/calibration.ts';

async function runReplay(args: ParsedArgs): Promise<number> {
  const [file] = args.positionals;
  const rig = readConfigFlag(args, replayCommand.flags);
  const f = args.flags;
  const flags = readPipelineFlags(args, 'replay');
  const rec = readRecordingFlags(args);
  const alarms = await readAlarmFlags(args, 'replay', rig?.rules);
  const speed = parseSpeed(f.speed as string);
  if (speed === undefined) {
    throw new UsageError(`floorline replay: --speed '${String(f.speed)}' is not 1, a positive number or max; e.g. --speed 10 or --speed max.`);
  }
  if (f.follow && f.loop) throw new UsageError('floorline replay: give --follow or --loop, not both.');
  if (f['start-sample'] !== undefined && f['start-time'] !== undefined) {
    throw new UsageError('floorline replay: give --start-sample or --start-time, not both.');
  }
  const pipeline = new Pipeline({ analysis: flags.analysis, averaging: flags.averaging, snapshotRate: flags.snapshotRate, mode: 'lossless' });
  const source = new ReplaySource(file, {
    speed,
    loop: f.loop as boolean,
    follow: f.follow as boolean,
    startSample: f['start-sample'] as number | undefined,
    startTime: f['start-time'] as number | undefined,
    scale: f.scale as number | undefined,
  });
  const channels = rig?.config.channels;
  const fed = channels ? new CalibratedSource(source, channels, (n) => process.stderr.write(`floorline replay: calibration: ${n}\n`)) : source;
  const snapOut = f['snapshots-out'] ? createWriteStream(f['snapshots-out'] as string) : undefined;
  if (snapOut) pipeline.on('snapshot', (s) => snapOut.write(snapshotToJsonLine(s) + '\n'));

  let session;
  let installed: Detector[] = [];
  try {
    session = await startSession({
      command: 'replay',
    notify: rig?.config.notify,
    retention: rig?.config.retention,
      pipeline,
      source: fed,
      dataDir: flags.data,
      record: rec.record,
      recorder: rec.recorder,
      statusEvery: rec.statusEvery,
      quiet: f.quiet as boolean,
      frames: () => source.fileInfo?.frames,
      detectors: (recorder) => (installed = alarmDetectors(alarms, recorder)),
      serve: f['no-server'] ? undefined : serveDashboard({
        pipeline, source: fed, args, replay: source, replayLoop: f.loop as boolean, detectors: () => installed,
        baseline: alarms.baseline && alarms.baselinePath ? { file: alarms.baselinePath, baseline: alarms.baseline } : undefined,
      }),
      eventsOut: alarms.eventsOut,
      history: withSource(historyFromArgs(args, 'replay', flags.data, file), file, alarms.rules.band.bands),
    });
  } catch (err) {
    const e = err as Error & { exitCode?: number };
    if (e instanceof UsageError) throw err;
    if (e instanceof RangeError) throw new UsageError(`floorline replay: ${e.message}`);
    throw new InputError(`floorline replay: cannot replay ${file}: ${e.message}`);
  }
  for (const w of source.fileInfo?.warnings ?? []) process.stderr.write(`floorline replay: warning: ${w}\n`);
  try {
    await source.done;
    await session.finished;
  } finally {
    if (snapOut) await new Promise<void>((r) => snapOut.end(r));
  }
  return 0;
}

export const replayCommand: CommandSpec = {
  name: 'replay',
  summary: 'run the live pipeline on a recording (WAV), in real time, N× faster or as fast as possible',
  details: [
    "Spectra, band values and events are stamped in the recording's sample time, so a replay at any speed",
    'gives the same results at the same sample indices as the live run that made the recording.',
    'Example: floorline replay floorline-data/recordings/rig.wav --speed max --no-server',
  ].join('\n'),
  positionals: [{ name: 'FILE', help: 'recording to replay (our float32 WAV, or int16/24/32 or float WAV from elsewhere)', required: true }],
  flags: [
    CONFIG_FLAG,
    { name: 'speed', kind: 'string', value: '1|N|max', default: '1', help: 'replay speed: 1 = real time, N times faster, or max' },
    { name: 'loop', kind: 'boolean', help: 'start again at the end (sample time keeps counting)' },
    { name: 'follow', kind: 'boolean', help: 'go on with the next files of a rotated recording (rec-…-sN.wav), as the live run saw them' },
    { name: 'start-sample', kind: 'number', value: 'N', integer: true, min: 0, help: 'start at this sample index (as printed in events)' },
    { name: 'start-time', kind: 'number', value: 'S', min: 0, help: 'start at this sample time t in seconds' },
    { name: 'scale', kind: 'number', value: 'V', min: 0, help: 'volts per full scale for integer PCM or unlabelled float files' },
    { name: 'no-server', kind: 'boolean', help: 'do not serve the dashboard; print to the terminal only' },
    { name: 'snapshots-out', kind: 'string', value: 'FILE', help: 'write every spectrum snapshot as JSON Lines (large)' },
    { name: 'quiet', kind: 'boolean', help: 'print only the summary at the end' },
    ...SERVER_FLAGS,
    ...HISTORY_FLAGS,
    ...ALARM_FLAGS,
    ...RECORDING_FLAGS,
    ...PIPELINE_FLAGS,
  ],
  run: runReplay,
};
