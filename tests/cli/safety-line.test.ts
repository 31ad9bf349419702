// The safety line for hum and mains pickup: `floorline run --help` prints the same words the dashboard shows with
// a mains incident (one constant, protocol/safety.ts, in both the CLI and the dashboard bundle).
import { spawnSync } from 'node:child_process';
import { readFileSync } from 'node:fs';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { root } from '../wav/support.ts';
import { MAINS_CAUTION } from '../../protocol/safety.ts';

describe('safety line', () => {
  it('says what common practice says about hum on a rig: isolate, never lift a protective earth, defer to codes and qualified people', () => {
    // Common practice (electrical safety): a ground loop is broken by isolating the signal path, never by
    // removing the protective earth; mains work follows local codes and is left to qualified people.
    expect(MAINS_CAUTION).toMatch(/isolate the measurement path/i);
    expect(MAINS_CAUTION).toMatch(/never lift a protective earth/i);
    expect(MAINS_CAUTION).toMatch(/local electrical codes/i);
    expect(MAINS_CAUTION).toMatch(/qualified people/i);
  });

  it('is printed by run --help and built into the dashboard, word for word', () => {
    const help = spawnSync(process.execPath, [join(root, 'bin/floorline.mjs'), 'run', '--help'], { encoding: 'utf8' });
    expect(help.status, help.stderr).toBe(0);
    expect(help.stdout).toContain(MAINS_CAUTION);
    const bundle = readFileSync(join(root, 'dist/dashboard/app.js'), 'utf8');
    expect(bundle).toContain(MAINS_CAUTION);
  });
});
