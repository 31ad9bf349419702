// The built CLI as a real process, for the suites that run it, and the JSON Lines files a run writes
// (events.jsonl, --events-out, --snapshots-out) read back.
import { spawnSync, type SpawnSyncReturns } from 'node:child_process';
import { readFileSync } from 'node:fs';
import { join } from 'node:path';
import { root } from '../wav/support.ts';

export const CLI = join(root, 'bin/floorline.mjs');
/** The bundled demo recording and the baseline taken from its quiet start (recordings/README.md). */
export const DEMO_WAV = join(root, 'recordings/demo.wav');
export const DEMO_BASELINE = join(root, 'recordings/demo-baseline.json');

/** The flags of a monitor run (run or replay) with no dashboard, history store or chatter, compared with the demo's
 *  baseline and writing its events to EVENTS as well. */
export function headlessAgainstDemoBaseline(events: string): string[] {
  return ['--no-server', '--no-history', '--quiet', '--baseline', DEMO_BASELINE, '--events-out', events];
}

export interface CliOptions {
  /** Working folder of the process (default: the test's own). */
  cwd?: string;
  /** Milliseconds before the process is killed (its status is then null); 0 = no limit. */
  timeout?: number;
}

/** Runs `floorline ARGS…` to its end; the caller checks the status (a refusal is often what is tested). */
export function floorline(args: readonly string[], options: CliOptions = {}): SpawnSyncReturns<string> {
  return spawnSync(process.execPath, [CLI, ...args], {
    encoding: 'utf8',
    maxBuffer: 256 << 20,
    timeout: options.timeout ?? 120_000,
    cwd: options.cwd,
  });
}

/** Every line of a JSON Lines file, parsed (an empty file gives none). */
export function readJsonLines<T = Record<string, unknown>>(path: string): T[] {
  const text = readFileSync(path, 'utf8').trim();
  return text ? text.split('\n').map((l) => JSON.parse(l) as T) : [];
}
