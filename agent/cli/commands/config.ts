// `floorline config check FILE`: validates a rig config and prints the settings a run with it would use.
import { defineCommand, type ParsedArgs } from '../args.ts';
import { UsageError } from '../../errors.ts';
import { loadRigConfig } from '../../config/rig-config.ts';
import { effectiveSettings } from '../../config/apply-config.ts';

async function runConfig(args: ParsedArgs<readonly []>): Promise<number> {
  const [action, file] = args.positionals;
  if (action !== 'check')
    throw new UsageError(
      `floorline config: unknown action '${action}'; the action is check, e.g. floorline config check rig.json.`,
    );
  if (!file)
    throw new UsageError(
      'floorline config check: missing FILE (the rig config JSON to check), e.g. floorline config check rig.json.',
    );
  const loaded = loadRigConfig(file);
  process.stdout.write(JSON.stringify(effectiveSettings(loaded), null, 2) + '\n');
  return 0;
}

export const configCommand = defineCommand({
  name: 'config',
  summary: 'check a rig config file and print the effective settings (exit 2 naming the JSON path of a mistake)',
  details: [
    'The file format is the JSON Schema agent/config/rig-config.schema.json; README.md shows a complete example.',
    'Example: floorline config check contrib/demo-rig.json',
  ].join('\n'),
  positionals: [
    { name: 'ACTION', help: 'check', required: true },
    { name: 'FILE', help: 'rig config JSON', required: false },
  ],
  flags: [] as const,
  run: runConfig,
});
