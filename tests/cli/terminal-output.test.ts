// Text from outside quoted in any message must reach the terminal without its control characters: an escape
// sequence in a command name, a flag value or a file name could otherwise clear the screen, retitle the terminal
// or hide lines (ECMA-48 control functions: CSI is ESC [, OSC is ESC ], C1 controls are U+0080–U+009F; from memory
// of the standard). Each case below reaches a message that quotes the hostile text.
import { spawnSync } from 'node:child_process';
import { mkdtempSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';

const bin = new URL('../../bin/floorline.mjs', import.meta.url).pathname;
const HOSTILE = '\u001b]0;owned\u0007\u001b[2J\u009b31m\r';
// Any C0 control but tab and newline, DEL, or C1.
// eslint-disable-next-line no-control-regex
const CONTROL = /[\u0000-\u0008\u000b-\u001f\u007f-\u009f]/;

function run(args: string[]): { out: string; err: string; code: number | null } {
  const r = spawnSync(process.execPath, [bin, ...args], {
    encoding: 'utf8',
    env: { ...process.env, FLOORLINE_LOG: 'text' },
  });
  return { out: r.stdout, err: r.stderr, code: r.status };
}

describe('terminal output carries no control characters from outside text', () => {
  const dir = mkdtempSync(join(tmpdir(), 'floorline-terminal-'));
  const hostileFile = join(dir, `rec${HOSTILE}.wav`);
  writeFileSync(hostileFile, 'not a wav');
  const cases: [string, string[]][] = [
    ['an unknown command', [`x${HOSTILE}`]],
    ['a bad flag value', ['replay', 'recordings/demo.wav', '--speed', `fast${HOSTILE}`, '--no-server']],
    ['a file that is not a WAV, by a hostile name', ['analyze', hostileFile]],
    ['a missing store by a hostile name', ['trend', '--store', join(dir, `none${HOSTILE}.sqlite`)]],
  ];
  for (const [label, args] of cases) {
    it(`for ${label}`, () => {
      const r = run(args);
      expect(r.code).toBe(2);
      expect(r.err.length, 'a message was printed').toBeGreaterThan(0);
      const text = r.out + r.err;
      expect(CONTROL.exec(text)?.[0], JSON.stringify(text)).toBeUndefined();
      expect(text).toContain('\uFFFD'); // the hostile text is shown, its controls replaced
    });
  }
});
