// `floorline demo`: the bundled recording of our invented rig, replayed in real time, looping, against its
// baseline, with the dashboard served. `npm start` runs this.
import { shownPath } from '../../config/shown-path.ts';
import { existsSync } from 'node:fs';
import { defineCommand, defineFlags, type ParsedArgs } from '../args.ts';
import { threadsFlag } from './threads-flag.ts';
import { InputError, UsageError } from '../../errors.ts';
import { DATA_FLAG, RECORDING_FLAGS, monitorOptionsFromFlags, calibratedSource } from './monitor-flags.ts';
import { CONFIG_FLAG, readConfigFlag } from '../../config/apply-config.ts';
import { HISTORY_FLAGS } from '../../store/cli-flags.ts';
import { readBaseline } from '../../baseline/format.ts';
import { ReplaySource, parseSpeed } from '../../sources/replay.ts';
import { SERVER_FLAGS } from '../../server/cli-flags.ts';
import { startMonitor } from '../../monitor/monitor.ts';

/** recordings/ of the package (beside dist/ where the CLI is bundled, or beside agent/ when run from source). */
export function bundledRecording(name: string): string {
  for (const base of ['../recordings/', '../../../recordings/']) {
    const p = new URL(base + name, import.meta.url).pathname;
    if (existsSync(p)) return p;
  }
  return new URL('../recordings/' + name, import.meta.url).pathname;
}

/** Where the demo's first pass starts in its recording (sample time, s): 3 s before the mains pickup at 20 s
 *  (recordings/demo-scenario.json), so the first fault shows within seconds while the spectrum has settled on the
 *  quiet floor. The bundled baseline was captured from the quiet 0–18 s, so it is unaffected. */
export const DEMO_START_SECONDS = 17;

async function runDemo(args: ParsedArgs<typeof DEMO_FLAGS>): Promise<number> {
  const rig = readConfigFlag(args, demoCommand.flags);
  const f = args.flags;
  const speed = parseSpeed(f.speed);
  if (speed === undefined)
    throw new UsageError(
      `floorline demo: --speed '${String(f.speed)}' is not 1, a positive number or max; e.g. --speed 4.`,
    );
  const file = bundledRecording('demo.wav');
  const baselinePath = bundledRecording('demo-baseline.json');
  if (!existsSync(file))
    throw new InputError(
      `floorline demo: the demo recording ${file} is missing; reinstall, or make it with \`floorline simulate recordings/demo-scenario.json --out recordings/demo.wav\`.`,
    );
  const baseline = existsSync(baselinePath) ? await readBaseline(baselinePath) : undefined;
  const loop = !f['no-loop'];
  // The first pass starts at DEMO_START_SECONDS, shortly before the first scripted fault; later loops play it all.
  const source = new ReplaySource(file, { speed, loop, startTime: DEMO_START_SECONDS, loopWholeFile: true });
  // The baseline was taken with the default analysis settings, so the demo runs with them (it has no analysis
  // flags). It is in the recording's own units: with --config, the options bring it into the config's (and say so).
  const options = await monitorOptionsFromFlags(args, 'demo', {
    mode: 'lossless',
    rig,
    sourceLabel: file,
    replay: source,
    frames: () => source.fileInfo?.frames,
    baseline: baseline ? { baseline, where: baselinePath, label: 'recordings/demo-baseline.json' } : undefined,
  });
  process.stdout.write(
    `floorline demo: replaying ${shownPath(file)} (an invented thermal-stand load-cell rig; see recordings/README.md)\n` +
      `  from t = ${DEMO_START_SECONDS} s (mains pickup at 20 s), ${speed === 1 ? 'in real time' : `at ${speed === 'max' ? 'full' : `${speed}×`} speed`}, ${loop ? 'looping over the whole 60 s' : 'once'}, ` +
      `against ${baseline ? 'recordings/demo-baseline.json' : 'no baseline'}; Ctrl-C stops it.\n`,
  );
  const monitor = await startMonitor(calibratedSource(source, rig, 'demo'), options);
  await source.done;
  await monitor.finished;
  return 0;
}

const DEMO_FLAGS = defineFlags([
  CONFIG_FLAG,
  { name: 'speed', kind: 'string', value: '1|N|max', default: '1', help: 'replay speed' },
  { name: 'no-loop', kind: 'boolean', help: 'play the recording once' },
  { name: 'no-server', kind: 'boolean', help: 'do not serve the dashboard' },
  { name: 'quiet', kind: 'boolean', help: 'print only errors and the summary' },
  DATA_FLAG,
  threadsFlag,
  ...RECORDING_FLAGS,
  ...SERVER_FLAGS,
  ...HISTORY_FLAGS,
]);

export const demoCommand = defineCommand({
  name: 'demo',
  summary: 'replay the bundled demo rig in real time, looping, with the dashboard (what `npm start` runs)',
  details:
    'The recording and its scripted events (mains pickup, a switching spur, a band floor rise, a clip) are described in recordings/README.md.',
  positionals: [],
  flags: DEMO_FLAGS,
  run: runDemo,
});
