// The subcommand registry: one module per subcommand under agent/cli/commands/.
import type { CommandSpec } from './args.ts';
import { replayCommand } from './commands/replay.ts';
import { runCommand } from './commands/run.ts';
import { demoCommand } from './commands/demo.ts';
import { analyzeCommand } from './commands/analyze.ts';
import { repairCommand } from './commands/repair.ts';
import { simulateCommand } from './commands/simulate.ts';
import { portsCommand } from './commands/ports.ts';
import { baselineCommand } from './commands/baseline.ts';
import { configCommand } from './commands/config.ts';
import { trendCommand } from '../store/commands/trend.ts';
import { incidentsCommand } from '../store/commands/incidents.ts';
import { noteCommand } from '../store/commands/note.ts';
import { reportCommand } from '../report/command.ts';

export const commands: CommandSpec[] = [
  demoCommand,
  runCommand,
  replayCommand,
  analyzeCommand,
  repairCommand,
  simulateCommand,
  portsCommand,
  baselineCommand,
  trendCommand,
  incidentsCommand,
  noteCommand,
  reportCommand,
  configCommand,
];
