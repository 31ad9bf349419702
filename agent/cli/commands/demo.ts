// `floorline demo`: the bundled recording of our invented rig, replayed in real time, looping, against its
// baseline, with the dashboard served. `npm start` runs this.
import { existsSync } from 'node:fs';
import type { CommandSpec, ParsedArgs } from '../args.ts';
import { InputError, UsageError } from '../usage-error.ts';
import { RECORDING_FLAGS, alarmDetectors, readRecordingFlags } from './pipeline-flags.ts';
import { DEFAULT_DATA_FOLDER } from '../../config/data-folder.ts';
import { defaultRules } from '../../rules/rules.ts';
import { readBaseline } from '../../baseline/format.ts';
import { Pipeline } from '../../pipeline/pipeline.ts';
import { ReplaySource, parseSpeed } from '../../sources/replay.ts';
import { SERVER_FLAGS } from '../../server/cli-flags.ts';
import { serveDashboard } from '../../server/serve.ts';
import type { Detector } from '../../pipeline/types.ts';
import { startSession } from './session.ts';
import { CONFIG_FLAG, readConfigFlag } from '../../config/apply-config.ts';
import { CalibratedSource, rescaleBaselineForReplay } from '../../config/calibration.ts';
import { HISTORY_FLAGS, historyFromArgs, withSource } from '../../store/cli-flags.ts';

/** recordings/ of the package (beside dist/ where the CLI is bundled, or beside agent/ when run from source). */
export function bundledRecording(name: string): string {
  for (const base of ['../recordings/', '../../../recordings/']) {
    const p = new URL(base + name, import.meta.url).pathname;
    if (existsSync(p)) return p;
  }
  return new URL('../recordings/' + name, import.meta.url).pathname;
}

async function runDemo(args: ParsedArgs): Promise<number> {
  const rig = readConfigFlag(args, demoCommand.flags);
  const f = args.flags;
  const speed = parseSpeed(f.speed as string);
  if (speed === undefined) throw new UsageError(`floorline demo: --speed '${String(f.speed)}' is not 1, a positive number or max; e.g. --speed 4.`);
  const file = bundledRecording('demo.wav');
  const baselinePath = bundledRecording('demo-baseline.json');
  if (!existsSync(file)) throw new InputError(`floorline demo: the demo recording ${file} is missing; reinstall, or make it with \`floorline simulate recordings/demo-scenario.json --out recordings/demo.wav\`.`);
  let baseline = existsSync(baselinePath) ? await readBaseline(baselinePath) : undefined;
  const channels = rig?.config.channels;
  if (baseline && channels) {
    // The bundled baseline is in the recording's own units; follow the config's calibration, and say so.
    const r = rescaleBaselineForReplay(baseline, channels);
    baseline = r.baseline;
    if (r.changed.length) process.stdout.write(`floorline demo: baseline brought into the config's units: ${r.changed.join(', ')}\n`);
  }
  const rec = readRecordingFlags(args);
  // The baseline was taken with the default analysis settings, so the demo runs with them.
  const pipeline = new Pipeline({ mode: 'lossless' });
  const loop = !(f['no-loop'] as boolean);
  const source = new ReplaySource(file, { speed, loop });
  const fed = channels ? new CalibratedSource(source, channels, (n) => process.stderr.write(`floorline demo: calibration: ${n}\n`)) : source;
  process.stdout.write(
    `floorline demo: replaying ${file} (an invented thermal-stand load-cell rig; see recordings/README.md)\n` +
      `  ${speed === 1 ? 'in real time' : `at ${speed === 'max' ? 'full' : `${speed}×`} speed`}, ${loop ? 'looping' : 'once'}, ` +
      `against ${baseline ? 'recordings/demo-baseline.json' : 'no baseline'}; Ctrl-C stops it.\n`,
  );
  let installed: Detector[] = [];
  const session = await startSession({
    command: 'demo',
    notify: rig?.config.notify,
    retention: rig?.config.retention,
    pipeline,
    source: fed,
    dataDir: f.data as string,
    record: rec.record,
    recorder: rec.recorder,
    statusEvery: rec.statusEvery,
    quiet: f.quiet as boolean,
    frames: () => source.fileInfo?.frames,
    detectors: (recorder) => (installed = alarmDetectors({ baseline, baselinePath, rules: rig?.rules ? structuredClone(rig.rules) : defaultRules() }, recorder)),
    history: withSource(historyFromArgs(args, 'demo', f.data as string), file),
    serve: f['no-server']
      ? undefined
      : serveDashboard({
          pipeline, source: fed, args, replay: source, replayLoop: loop, detectors: () => installed,
          baseline: baseline ? { file: 'recordings/demo-baseline.json', baseline } : undefined,
        }),
  });
  await source.done;
  await session.finished;
  return 0;
}

export const demoCommand: CommandSpec = {
  name: 'demo',
  summary: 'replay the bundled demo rig in real time, looping, with the dashboard (what `npm start` runs)',
  details: 'The recording and its scripted events (mains pickup, a switching spur, a band floor rise, a clip) are described in recordings/README.md.',
  positionals: [],
  flags: [
    CONFIG_FLAG,
    { name: 'speed', kind: 'string', value: '1|N|max', default: '1', help: 'replay speed' },
    { name: 'no-loop', kind: 'boolean', help: 'play the recording once' },
    { name: 'no-server', kind: 'boolean', help: 'do not serve the dashboard' },
    { name: 'quiet', kind: 'boolean', help: 'print only errors and the summary' },
    { name: 'data', kind: 'string', value: 'DIR', default: DEFAULT_DATA_FOLDER, help: 'data folder (recordings/, baselines/, events.jsonl)' },
    ...RECORDING_FLAGS,
    ...SERVER_FLAGS,
    ...HISTORY_FLAGS,
  ],
  run: runDemo,
};
