// How many analysis threads to use: --threads N, by default one fewer than the machine's cores (the reading and
// event thread keeps one), at least 1. With 1 everything runs on the calling thread, as before workers existed.
import { availableParallelism } from 'node:os';

export const MAX_THREADS = 64;

export function defaultThreads(): number {
  return Math.max(1, availableParallelism() - 1);
}

/** The --threads value to use; RangeError naming the fix for a bad one. */
export function resolveThreads(requested: number | undefined): number {
  if (requested === undefined) return defaultThreads();
  if (!Number.isInteger(requested) || requested < 1 || requested > MAX_THREADS) {
    throw new RangeError(
      `--threads ${requested}: give a whole number of threads from 1 to ${MAX_THREADS} (default: cores − 1 = ${defaultThreads()})`,
    );
  }
  return requested;
}
