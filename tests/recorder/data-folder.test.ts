// The data folder's safe path resolver: names inside resolve, `../` escapes, absolute paths elsewhere and
// symbolic links pointing out are refused. Oracle: python's os.path.realpath + os.path.commonpath on the same
// names (what the operating system would open).
import { mkdirSync, symlinkSync } from 'node:fs';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { dataFolderAt, ensureDataFolder } from '../../agent/config/data-folder.ts';
import { PathOutsideError, resolveInside } from '../../agent/config/safe-path.ts';
import { Python, tempDir } from '../wav/support.ts';

let dir: string;
let py: Python;

beforeAll(() => {
  dir = tempDir('data-folder');
  py = new Python();
});
afterAll(() => py.close());

describe('data folder', () => {
  it('lays out recordings/, baselines/ and events.jsonl under --data', () => {
    const f = ensureDataFolder(dataFolderAt(join(dir, 'fd')));
    expect(f.recordings).toBe(join(dir, 'fd', 'recordings'));
    expect(f.baselines).toBe(join(dir, 'fd', 'baselines'));
    expect(f.events).toBe(join(dir, 'fd', 'events.jsonl'));
  });

  it('resolves names inside it and refuses every name that leaves it, as os.path.realpath/commonpath judge', async () => {
    const root = join(dir, 'data');
    mkdirSync(join(root, 'recordings'), { recursive: true });
    mkdirSync(join(dir, 'elsewhere'), { recursive: true });
    symlinkSync(join(dir, 'elsewhere'), join(root, 'recordings', 'out-link'));
    symlinkSync(join(root, 'baselines-real'), join(root, 'in-link'));
    mkdirSync(join(root, 'baselines-real'), { recursive: true });
    const names = [
      'recordings/a.wav',
      'baselines/quiet.json',
      'events.jsonl',
      './recordings/../baselines/b.json',
      'in-link/x.json',
      '../x.wav',
      'recordings/../../x.wav',
      '/etc/passwd',
      join(dir, 'elsewhere', 'x.wav'),
      'recordings/out-link/x.wav',
      join(root, 'recordings', 'ok.wav'),
      '..',
      'recordings/../..',
    ];
    const inside = await py.run<boolean[]>(
      `import os
root = os.path.realpath(args[0])
result = [os.path.commonpath([root, os.path.realpath(os.path.join(args[0], n))]) == root for n in args[1]]`,
      root,
      names,
    );
    const ours = names.map((n) => {
      try {
        resolveInside(root, n);
        return true;
      } catch (err) {
        expect(err).toBeInstanceOf(PathOutsideError);
        expect((err as Error).message).toMatch(/outside the data folder; name a file inside it/);
        return false;
      }
    });
    expect(ours).toEqual(inside);
    expect(inside.filter((x) => !x).length).toBe(7); // the escapes above are real escapes by python's judgement
    expect(() => resolveInside(root, '')).toThrow(PathOutsideError);
    expect(() => resolveInside(root, 'a\0b')).toThrow(PathOutsideError);
  });
});
