// `--unit U`, shared by analyze, replay and baseline: names the unit of samples that read as FS.
import { defineFlag } from '../args.ts';

export const UNIT_FLAG = defineFlag({
  name: 'unit',
  kind: 'string',
  value: 'U',
  help: 'unit of samples that read as FS (e.g. a float file from another tool already in volts: --unit V)',
});
