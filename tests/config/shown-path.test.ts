// Paths shown to dashboard clients and in status: relative to the working folder when the file is inside it (the
// host's folder layout stays on the host), as given otherwise. POSIX path rules (node:path, common practice).
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { shownPath } from '../../agent/config/shown-path.ts';

describe('shownPath', () => {
  it('shortens a path inside the working folder and keeps one outside it', () => {
    expect(shownPath(join(process.cwd(), 'recordings', 'demo.wav'))).toBe('recordings/demo.wav');
    expect(shownPath('recordings/demo.wav')).toBe('recordings/demo.wav');
    expect(shownPath('/var/tmp/rig.wav')).toBe('/var/tmp/rig.wav');
    expect(shownPath(join(process.cwd(), '..', 'other', 'rig.wav'))).toBe(
      join(process.cwd(), '..', 'other', 'rig.wav'),
    );
    // A sibling whose name starts with two dots is inside, not a parent.
    expect(shownPath(join(process.cwd(), '..rig.wav'))).toBe('..rig.wav');
  });
});
