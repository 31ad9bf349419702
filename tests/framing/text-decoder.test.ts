import { describe, expect, it } from 'vitest';
import { TextLineDecoder, MAX_LINE } from '../../agent/framing/text-decoder.ts';
import { runPython } from './run-python.ts';

function collect(
  text: string | Uint8Array,
  chunk = 1 << 30,
): { rows: number[][]; names?: string[]; dec: TextLineDecoder } {
  const rows: number[][] = [];
  let names: string[] | undefined;
  const dec = new TextLineDecoder({
    row: (v, n) => rows.push(Array.from(v.subarray(0, n))),
    names: (n) => (names = n),
  });
  const bytes = typeof text === 'string' ? new TextEncoder().encode(text) : text;
  for (let p = 0; p < bytes.length; p += chunk) dec.push(bytes.subarray(p, Math.min(bytes.length, p + chunk)));
  return { rows, names, dec };
}

describe('TextLineDecoder', () => {
  it('reads comma, space and tab separated lines with CRLF or LF, split anywhere, as numpy.loadtxt does', () => {
    const text = '# rig 4\r\nlna, ref\tvbias\r\n1,2,3\n-0.5e-3  4 \t 5\r\n\n+6,.25,7.\n';
    // Outside reference: numpy.loadtxt with the same separators normalised (comments '#', names row skipped).
    const ref = JSON.parse(
      runPython(
        `
import sys, re, json, numpy as np
lines = [re.sub(r'[,\\t ]+', ' ', l).strip() for l in sys.stdin.read().splitlines()]
print(json.dumps(np.loadtxt(lines, comments='#', skiprows=2).tolist()))`,
        new TextEncoder().encode(text),
      ),
    ) as number[][];
    for (const chunk of [1, 2, 5, 1000]) {
      const { rows, names } = collect(text, chunk);
      expect(rows).toEqual(ref);
      expect(names).toEqual(['lna', 'ref', 'vbias']);
    }
  });

  it('counts a line with the wrong number of values or a bad token as malformed and keeps going', () => {
    const { rows, dec } = collect('1 2\n3\n4 x\n5 6\nnan 1\n7 8\n');
    expect(rows).toEqual([
      [1, 2],
      [5, 6],
      [7, 8],
    ]);
    expect(dec.counters.malformed).toBe(3);
  });

  it('skips a line longer than MAX_LINE up to its newline, counting it', () => {
    const long = '1,'.repeat(MAX_LINE) + '1\n';
    const { rows, dec } = collect(`1,2\n${long}3,4\n`, 700);
    expect(rows).toEqual([
      [1, 2],
      [3, 4],
    ]);
    expect(dec.counters.overlong).toBe(1);
  });
});
