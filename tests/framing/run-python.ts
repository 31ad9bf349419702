// Runs a python3 snippet (numpy, scipy, zlib, struct available) with bytes on stdin; returns stdout as text.
// The outside reference for framing and synthesis checks.
import { spawnSync } from 'node:child_process';

export function runPython(script: string, input: Uint8Array = new Uint8Array(0)): string {
  const r = spawnSync('python3', ['-c', script], { input, maxBuffer: 1 << 28, encoding: 'buffer' });
  if (r.status !== 0) throw new Error(`python3 failed (${r.error?.message ?? r.status}): ${r.stderr?.toString()}`);
  return r.stdout.toString();
}
