// Shared by the store and report suites: the CLI in a folder, and the bundled demo replayed once into a store.
import { spawnSync } from 'node:child_process';
import { join } from 'node:path';
import { expect } from 'vitest';
import { root } from '../wav/support.ts';

export function cliIn(dir: () => string) {
  return (...args: string[]) =>
    spawnSync(process.execPath, [join(root, 'bin/floorline.mjs'), ...args], {
      encoding: 'utf8',
      cwd: dir(),
      timeout: 120_000,
    });
}

/** Replays recordings/demo.wav against its baseline into DIR/demo.sqlite (events in DIR/data); returns the store. */
export function replayDemoIntoStore(dir: string): string {
  const store = join(dir, 'demo.sqlite');
  const r = cliIn(() => dir)(
    'replay',
    join(root, 'recordings/demo.wav'),
    '--speed',
    'max',
    '--no-server',
    '--quiet',
    '--data',
    join(dir, 'data'),
    '--store',
    store,
    '--baseline',
    join(root, 'recordings/demo-baseline.json'),
  );
  expect(r.status, r.stderr).toBe(0);
  return store;
}
