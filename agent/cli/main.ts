// The `floorline` command: dispatches to one subcommand module each.
import { formatHelp, parseArgs, type CommandSpec } from './args.ts';
import { commands } from './commands.ts';
import { printable } from '../../protocol/limits.ts';
import { installStructuredLogs, structuredLogsWanted } from '../service/log-lines.ts';
import { FloorlineError } from '../errors.ts';
import { guardTerminalOutput } from './output-guard.ts';

/** The long-running commands, whose output becomes JSON lines under a service manager. */
const SERVICE_COMMANDS = ['run', 'replay', 'demo'];

function topHelp(): string {
  const rows = commands.map((c) => `  ${c.name.padEnd(10)} ${c.summary}`);
  return [
    'usage: floorline <command> [flags]',
    '',
    'commands:',
    ...rows,
    '',
    'Run `floorline <command> --help` for its flags.',
    '',
  ].join('\n');
}

export async function main(argv: string[]): Promise<number> {
  guardTerminalOutput();
  const [name, ...rest] = argv;
  if (name === undefined || name === '--help' || name === '-h' || name === 'help') {
    process.stdout.write(topHelp());
    return name === undefined ? 2 : 0;
  }
  const spec: CommandSpec | undefined = commands.find((c) => c.name === name);
  if (!spec) {
    process.stderr.write(
      `floorline: unknown command '${name}'; commands are ${commands.map((c) => c.name).join(', ')}. See \`floorline --help\`.\n`,
    );
    return 2;
  }
  if (rest.includes('--help') || rest.includes('-h')) {
    process.stdout.write(formatHelp(spec));
    return 0;
  }
  if (SERVICE_COMMANDS.includes(spec.name) && structuredLogsWanted()) installStructuredLogs(spec.name);
  try {
    return await spec.run(parseArgs(spec, rest));
  } catch (err) {
    const e = err as Error & { exitCode?: number };
    // FloorlineError (agent/errors.ts) is the one error type for the user; a few errors from parts still carry a
    // bare exitCode (they are converted as they are touched).
    if (err instanceof FloorlineError || (e && typeof e.exitCode === 'number')) {
      process.stderr.write(`${printable(e.message)}\n`);
      return e.exitCode!;
    }
    throw err;
  }
}
