// Shared by the store and report suites: the CLI in a folder, and the bundled demo replayed once into a store.
import { join } from 'node:path';
import { expect } from 'vitest';
import { DEMO_BASELINE, DEMO_WAV, floorline } from '../support/cli.ts';

export function cliIn(dir: () => string) {
  return (...args: string[]) => floorline(args, { cwd: dir() });
}

/** Replays recordings/demo.wav against its baseline into DIR/demo.sqlite (events in DIR/data); returns the store. */
export function replayDemoIntoStore(dir: string): string {
  const store = join(dir, 'demo.sqlite');
  const r = cliIn(() => dir)(
    'replay',
    DEMO_WAV,
    '--speed',
    'max',
    '--no-server',
    '--quiet',
    '--data',
    join(dir, 'data'),
    '--store',
    store,
    '--baseline',
    DEMO_BASELINE,
  );
  expect(r.status, r.stderr).toBe(0);
  return store;
}
