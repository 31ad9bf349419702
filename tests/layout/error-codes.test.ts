// docs/ERRORS.md lists exactly the codes of agent/errors.ts with their exit status, and the CLI exits with it.
import { describe, expect, it } from 'vitest';
import { readFileSync } from 'node:fs';
import { ERROR_CODES, FloorlineError, UsageError } from '../../agent/errors.ts';
import { WavError } from '../../agent/wav/errors.ts';

const root = new URL('../../', import.meta.url).pathname;

describe('error codes', () => {
  it('are the rows of docs/ERRORS.md, with the same exit status', () => {
    const rows = [...readFileSync(`${root}docs/ERRORS.md`, 'utf8').matchAll(/^\| `([A-Z_]+)` \| (\d+) \|/gm)].map(
      (m) => [m[1], Number(m[2])],
    );
    expect(rows).toEqual(Object.entries(ERROR_CODES));
  });

  it('ride on one type: subclasses keep their code and status', () => {
    const u = new UsageError('floorline x: --y is not a number; give e.g. --y 3.');
    expect(u).toBeInstanceOf(FloorlineError);
    expect([u.code, u.exitCode]).toEqual(['USAGE', 2]);
    const w = new WavError('WAV_NO_DATA', 'x.wav has no data chunk');
    expect(w).toBeInstanceOf(FloorlineError);
    expect([w.code, w.exitCode, w.name]).toEqual(['WAV_NO_DATA', 2, 'WavError']);
  });
});
