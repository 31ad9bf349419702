// Runs tests/alarms/scipy-reference.py (numpy + scipy) and returns its JSON answer.
import { spawnSync } from 'node:child_process';
import { fileURLToPath } from 'node:url';

const script = fileURLToPath(new URL('./scipy-reference.py', import.meta.url));

export function scipyReference<T>(command: string, args: unknown): T {
  const r = spawnSync('python3', [script, command], {
    input: JSON.stringify(args),
    encoding: 'utf8',
    maxBuffer: 64 << 20,
  });
  if (r.status !== 0)
    throw new Error(`scipy-reference.py ${command} failed (${r.error?.message ?? r.status}): ${r.stderr}`);
  return JSON.parse(r.stdout) as T;
}

/** Several references in one python3 start (scipy's import dominates a single call). */
export function scipyBatch(calls: [string, unknown][]): unknown[] {
  return scipyReference<unknown[]>('batch', calls);
}
