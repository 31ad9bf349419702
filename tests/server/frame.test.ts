// The binary frame layout as documented in protocol/frame.ts, read back by an independent reader
// (python3 struct + numpy.frombuffer following the documented offsets), and its error cases.
import { describe, expect, it } from 'vitest';
import { spawnSync } from 'node:child_process';
import { decodeFrame, encodeFrame, frameBytes, FrameFormatError, FRAME_MAGIC } from '../../protocol/frame.ts';
import { WIRE_PROTOCOL_VERSION } from '../../protocol/messages.ts';
import { SeededRandom } from '../../dsp/random.ts';

function sampleFrame(): { buf: ArrayBuffer; psd: Float64Array[] } {
  const rng = new SeededRandom(11);
  const psd = [0, 1, 2].map(() => Float64Array.from({ length: 257 }, () => Math.exp(rng.gaussian() * 10 - 30)));
  const buf = new ArrayBuffer(frameBytes(3, 257));
  encodeFrame(
    buf,
    {
      kind: 'spectrum',
      seq: 42,
      channels: 3,
      contextId: 7,
      length: 257,
      sample: 2 ** 40 + 3,
      sampleRate: 48000,
      binHz: 93.75,
    },
    [10, 20.5, 30],
    psd,
  );
  return { buf, psd };
}

describe('spectrum frames', () => {
  it('round-trip: header fields exactly, values rounded to float32 as Math.fround does (IEEE 754 binary32)', () => {
    const { buf, psd } = sampleFrame();
    const f = decodeFrame(buf);
    expect(f).toMatchObject({
      kind: 'spectrum',
      seq: 42,
      channels: 3,
      contextId: 7,
      length: 257,
      sample: 2 ** 40 + 3,
      sampleRate: 48000,
      binHz: 93.75,
    });
    expect([...f.averages]).toEqual([10, 20.5, 30]);
    for (let c = 0; c < 3; c++) for (let k = 0; k < 257; k++) expect(f.values[c][k]).toBe(Math.fround(psd[c][k]));
  });

  it('are read the same by numpy following the documented layout', () => {
    const { buf, psd } = sampleFrame();
    const py = [
      'import sys, struct, json, numpy as np',
      'b = sys.stdin.buffer.read()',
      "magic, ver, kind, seq, C, ctx, L, _r, sample, rate, binhz = struct.unpack_from('<IHHIHHIIddd', b, 0)",
      "avg = np.frombuffer(b, dtype='<f8', count=C, offset=48)",
      "vals = np.frombuffer(b, dtype='<f4', count=C*L, offset=48+8*C).reshape(C, L)",
      'print(json.dumps([magic, ver, kind, seq, C, ctx, L, sample, rate, binhz, avg.tolist(), vals[1, 100].item(), vals[2, 256].item()]))',
    ].join('\n');
    const r = spawnSync('python3', ['-c', py], { input: Buffer.from(buf), encoding: 'utf8' });
    expect(r.stderr).toBe('');
    const out = JSON.parse(r.stdout);
    expect(out).toEqual([
      FRAME_MAGIC,
      WIRE_PROTOCOL_VERSION,
      1,
      42,
      3,
      7,
      257,
      2 ** 40 + 3,
      48000,
      93.75,
      [10, 20.5, 30],
      Math.fround(psd[1][100]),
      Math.fround(psd[2][256]),
    ]);
  });

  it('decodes a misaligned slice (as Node hands out pooled Buffers) by copying it', () => {
    const { buf } = sampleFrame();
    const shifted = new Uint8Array(buf.byteLength + 3);
    shifted.set(new Uint8Array(buf), 3);
    expect(decodeFrame(shifted.buffer, 3, buf.byteLength).seq).toBe(42);
  });

  it('refuses short, foreign, other-version and wrongly sized frames with a stable code', () => {
    const { buf } = sampleFrame();
    const code = (b: ArrayBuffer, len = b.byteLength): string => {
      try {
        decodeFrame(b, 0, len);
        return 'none';
      } catch (e) {
        return e instanceof FrameFormatError ? e.code : 'other';
      }
    };
    expect(code(buf, 20)).toBe('short');
    expect(code(buf, buf.byteLength - 4)).toBe('size');
    const foreign = buf.slice(0);
    new DataView(foreign).setUint32(0, 0xdeadbeef, true);
    expect(code(foreign)).toBe('magic');
    const later = buf.slice(0);
    new DataView(later).setUint16(4, WIRE_PROTOCOL_VERSION + 1, true);
    expect(code(later)).toBe('version');
    const kind = buf.slice(0);
    new DataView(kind).setUint16(6, 99, true);
    expect(code(kind)).toBe('kind');
  });

  it('refuses to encode into a buffer that is too small', () => {
    expect(() =>
      encodeFrame(
        new ArrayBuffer(100),
        { kind: 'trace', seq: 0, channels: 1, contextId: 0, length: 100, sample: 0, sampleRate: 1, binHz: 0 },
        null,
        [new Float64Array(100)],
      ),
    ).toThrow(RangeError);
  });
});
