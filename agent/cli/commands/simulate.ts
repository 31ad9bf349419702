// `floorline simulate SCENARIO.json`: the board simulator and reference encoder of the serial protocol.
import { readFileSync, statSync } from 'node:fs';
import { defineCommand, defineFlags, type ParsedArgs } from '../args.ts';
import { InputError, UsageError } from '../../errors.ts';
import { parseScenario, ScenarioError, type Scenario } from '../../sim/scenario.ts';
import { Simulation, type SimulationOptions } from '../../sim/run-simulation.ts';

function loadScenario(path: string): Scenario {
  let text: string;
  try {
    text = readFileSync(path, 'utf8');
  } catch (err) {
    throw new InputError(
      `floorline simulate: cannot read scenario ${path} (${(err as NodeJS.ErrnoException).code ?? (err as Error).message}); check the path.`,
    );
  }
  try {
    return parseScenario(text, path);
  } catch (err) {
    if (err instanceof ScenarioError)
      throw new InputError(`floorline simulate: ${err.message}. See agent/sim/SCENARIO.md.`);
    throw err;
  }
}

function outputOf(out: string, baudRate: number): SimulationOptions['output'] {
  if (out === '-') return { kind: 'stdout' };
  if (/\.wav$/i.test(out)) return { kind: 'wav', path: out };
  let isDevice = false;
  try {
    isDevice = statSync(out).isCharacterDevice();
  } catch {
    throw new UsageError(
      `floorline simulate: --out ${out} does not exist; give a serial device or pty path (e.g. one end of a socat pty pair), '-' for stdout, or a NAME.wav file.`,
    );
  }
  if (!isDevice)
    throw new UsageError(
      `floorline simulate: --out ${out} is not a character device; give a serial/pty path, '-' for stdout, or a path ending in .wav.`,
    );
  return { kind: 'port', path: out, baudRate };
}

async function run(args: ParsedArgs<typeof SIMULATE_FLAGS>): Promise<number> {
  const f = args.flags;
  const scenario = loadScenario(args.positionals[0]);
  const seed = f.seed ?? scenario.seed;
  const duration = f.duration ?? scenario.duration;
  const output = outputOf(f.out, f.baud);
  if (output.kind === 'wav' && duration === undefined) {
    throw new UsageError(
      'floorline simulate: a WAV recording needs a length; give --duration S or "duration" in the scenario.',
    );
  }
  if (output.kind === 'wav' && f.format !== 'binary')
    throw new UsageError('floorline simulate: --format applies to serial and stdout output, not to WAV; drop it.');
  const totalFrames = duration === undefined ? Infinity : Math.round(duration * scenario.rate);
  const log = (line: string): void => {
    process.stderr.write(`${line}\n`);
  };
  const sim = new Simulation({
    scenario,
    seed,
    totalFrames,
    output,
    format: f.format,
    realtime: f.realtime,
    log,
  });
  const stop = (): void => sim.stop();
  process.once('SIGINT', stop);
  process.once('SIGTERM', stop);
  try {
    const s = await sim.run();
    const seconds = s.frames / scenario.rate;
    log(
      `simulate: ${s.frames} instants (${seconds.toFixed(3)} s of sample time) × ${scenario.channels.length} ch at ${scenario.rate} Hz, seed ${seed}` +
        (output.kind === 'wav'
          ? ` → ${output.path}`
          : `, ${s.bytes} bytes, ${s.droppedFrames} frames dropped by the scenario`) +
        (s.clipped.some((c) => c > 0) ? `, clipped samples per channel ${s.clipped.join('/')}` : ''),
    );
  } finally {
    process.off('SIGINT', stop);
    process.off('SIGTERM', stop);
  }
  return 0;
}

const SIMULATE_FLAGS = defineFlags([
  { name: 'out', kind: 'string', value: 'PATH', default: '-', help: "serial/pty path, '-' for stdout, or NAME.wav" },
  {
    name: 'format',
    kind: 'string',
    value: 'FMT',
    choices: ['binary', 'text'],
    default: 'binary',
    help: 'wire format for serial and stdout',
  },
  {
    name: 'duration',
    kind: 'number',
    value: 'S',
    min: 0.001,
    help: "seconds of sample time (default: the scenario's, else until stopped)",
  },
  { name: 'realtime', kind: 'boolean', help: 'pace stdout output to the wall clock too (serial paths always are)' },
  {
    name: 'seed',
    kind: 'number',
    value: 'N',
    integer: true,
    min: 0,
    max: 0xffffffff,
    help: "random seed (default: the scenario's, else 1)",
  },
  {
    name: 'baud',
    kind: 'number',
    value: 'N',
    integer: true,
    min: 50,
    default: 921600,
    help: 'baud rate to open a real serial device with (ptys ignore it)',
  },
]);

export const simulateCommand = defineCommand({
  name: 'simulate',
  summary: 'board simulator: plays a scenario file as framed samples to a serial/pty path, stdout, or a WAV recording',
  details: [
    'SCENARIO.json describes the board (rate, sample format), its channels (name, unit, perCount, fullScale) and',
    'the signals on each (white, flicker, tone, mains, band-step, overload) plus link faults (drop, corrupt,',
    'garbage); see agent/sim/SCENARIO.md. Same scenario and seed give the same samples, bit for bit, on every output.',
    'To a serial or pty path blocks leave about every 10 ms of sample time, paced to the wall clock; the simulator',
    'answers describe requests and survives the path going away (its sample counter keeps running). Like a board,',
    'it buffers up to 8 MiB while the reader is slow and then drops whole frames (the host sees a gap).',
    'A path ending in .wav gets float32 volts with the recording sidecar (link faults do not apply there).',
    'Example: socat -d -d pty,raw,echo=0,link=/tmp/fl-board pty,raw,echo=0,link=/tmp/fl-host &',
    '         floorline simulate agent/sim/scenarios/bench-rig.json --out /tmp/fl-board',
    '         floorline run --port /tmp/fl-host',
  ].join('\n'),
  positionals: [{ name: 'SCENARIO', help: 'scenario JSON file', required: true }],
  flags: SIMULATE_FLAGS,
  run,
});
