// `floorline run --port PATH`: live from a board over USB serial (binary framed or text), through the pipeline,
// with alarms, event log, recording and the dashboard.
import { defineCommand, defineFlags, type ParsedArgs } from '../args.ts';
import { threadsFlag } from './threads-flag.ts';
import { UsageError } from '../../errors.ts';
import {
  ALARM_FLAGS,
  PIPELINE_FLAGS,
  RECORDING_FLAGS,
  monitorOptionsFromFlags,
  calibratedSource,
} from './monitor-flags.ts';
import { CONFIG_FLAG, readConfigFlag } from '../../config/apply-config.ts';
import { HISTORY_FLAGS } from '../../store/cli-flags.ts';
import { SerialSource } from '../../sources/serial.ts';
import { SERVER_FLAGS } from '../../server/cli-flags.ts';
import { startMonitor } from '../../monitor/monitor.ts';
import { MAINS_CAUTION } from '../../../protocol/safety.ts';

async function runLive(args: ParsedArgs<typeof RUN_FLAGS>): Promise<number> {
  const rig = readConfigFlag(args, runCommand.flags);
  const f = args.flags;
  const port = f.port;
  if (!port)
    throw new UsageError(
      'floorline run: --port is required: a device path (/dev/serial/by-id/…), VID:PID or serial=SERIAL; see `floorline ports`.',
    );
  const format = f.format;
  if (format === 'text' && f.rate === undefined) {
    throw new UsageError(
      'floorline run: --format text needs --rate HZ (a text board sends no descriptor), e.g. --rate 1000.',
    );
  }
  const options = await monitorOptionsFromFlags(args, 'run', {
    mode: 'bounded',
    rig,
    sourceLabel: port,
    queueCapacity: f.queue,
    durationSeconds: f.duration,
  });
  const serial = new SerialSource({
    port,
    baudRate: f.baud,
    format,
    rate: f.rate,
    unit: f.unit,
    scale: f.scale,
    log: (line) => process.stderr.write(`floorline run: ${line}\n`),
  });
  const monitor = await startMonitor(calibratedSource(serial, rig, 'run'), options);
  await monitor.finished;
  return 0;
}

const RUN_FLAGS = defineFlags([
  CONFIG_FLAG,
  {
    name: 'port',
    kind: 'string',
    value: 'PATH',
    help: 'serial device path, VID:PID[:SERIAL] or serial=SERIAL (see `floorline ports`)',
  },
  {
    name: 'baud',
    kind: 'number',
    value: 'N',
    integer: true,
    min: 1,
    default: 921600,
    help: 'baud rate (ignored by USB CDC boards and ptys)',
  },
  {
    name: 'format',
    kind: 'string',
    value: 'FMT',
    choices: ['binary', 'text'],
    default: 'binary',
    help: 'wire format',
  },
  { name: 'rate', kind: 'number', value: 'HZ', min: 0.001, help: 'sample rate of a text-mode board' },
  { name: 'unit', kind: 'string', value: 'U', default: 'V', help: 'unit of a text-mode board' },
  {
    name: 'scale',
    kind: 'number',
    value: 'X',
    min: Number.MIN_VALUE,
    default: 1,
    help: 'unit per printed value of a text-mode board',
  },
  { name: 'duration', kind: 'number', value: 'S', min: 0, help: 'stop after S seconds of sample time' },
  {
    name: 'queue',
    kind: 'number',
    value: 'N',
    integer: true,
    min: 1,
    max: 100000,
    default: 64,
    help: 'blocks queued for analysis before whole blocks are dropped',
  },
  { name: 'no-server', kind: 'boolean', help: 'do not serve the dashboard' },
  { name: 'quiet', kind: 'boolean', help: 'print only errors and the summary' },
  ...ALARM_FLAGS,
  ...RECORDING_FLAGS,
  threadsFlag,
  ...PIPELINE_FLAGS,
  ...SERVER_FLAGS,
  ...HISTORY_FLAGS,
]);

export const runCommand = defineCommand({
  name: 'run',
  summary: 'monitor a board live over USB serial: spectra, band RMS, alarms, recording, dashboard',
  details: [
    'Binary boards describe themselves (rate, channels, units, volts per count); text boards print one line per',
    'sample instant and need --rate. Blocks the analysis cannot keep up with are dropped whole and counted.',
    'Example: floorline run --port /dev/serial/by-id/usb-…-if00 --baseline floorline-data/baselines/quiet.json',
    `Safety with hum or mains pickup: ${MAINS_CAUTION}`,
  ].join('\n'),
  positionals: [],
  flags: RUN_FLAGS,
  run: runLive,
});
