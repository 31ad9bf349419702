import { describe, expect, it } from 'vitest';
import { crc32 } from '../../agent/framing/crc32.ts';
import { SeededRandom } from '../../dsp/random.ts';
import { runPython } from './run-python.ts';

describe('crc32 (CRC-32/ISO-HDLC)', () => {
  it('gives the published check value 0xCBF43926 for "123456789"', () => {
    // Check value: Greg Cook, "Catalogue of parametrised CRC algorithms" (reveng), CRC-32/ISO-HDLC, check=0xcbf43926.
    expect(crc32(new TextEncoder().encode('123456789'))).toBe(0xcbf43926);
  });

  it('gives 0 for no bytes (init 0xFFFFFFFF xor-out 0xFFFFFFFF)', () => {
    // Same catalogue entry: init=0xffffffff, xorout=0xffffffff, so the empty message yields 0.
    expect(crc32(new Uint8Array(0))).toBe(0);
  });

  it('equals zlib.crc32 on random buffers of every length 0..67 and on sub-ranges', () => {
    // Outside reference: python's zlib.crc32 implements CRC-32/ISO-HDLC.
    const rng = new SeededRandom(7);
    const buf = new Uint8Array(4096);
    for (let i = 0; i < buf.length; i++) buf[i] = rng.nextUint32() & 0xff;
    const ranges: [number, number][] = [];
    for (let n = 0; n < 68; n++) ranges.push([n, 2 * n]);
    ranges.push([3, 4096], [0, 4096], [1000, 1001]);
    const script = `
import sys, zlib, json
b = sys.stdin.buffer.read()
r = json.loads(${JSON.stringify(JSON.stringify(ranges))})
print(json.dumps([zlib.crc32(b[s:e]) for s, e in r]))`;
    const expected = JSON.parse(runPython(script, buf)) as number[];
    expect(ranges.map(([s, e]) => crc32(buf, s, e))).toEqual(expected);
  });
});
