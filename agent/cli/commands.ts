// The subcommand registry: one module per subcommand under agent/cli/commands/.
import type { CommandSpec } from './args.ts';
import { replayCommand } from './commands/replay.ts';

export const commands: CommandSpec[] = [replayCommand];
