// --threads N for the commands that can spread analysis over worker threads.
import { defineFlag } from '../args.ts';
import { defaultThreads, MAX_THREADS } from '../../workers/threads.ts';

export const threadsFlag = defineFlag({
  name: 'threads',
  kind: 'number',
  value: 'N',
  integer: true,
  min: 1,
  max: MAX_THREADS,
  help: `analysis threads (default: cores − 1, here ${defaultThreads()}); results are identical for every N`,
});
