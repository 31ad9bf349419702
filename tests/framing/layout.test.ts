import { describe, expect, it } from 'vitest';
import {
  encodeDescribeRequest,
  encodeDescriptorFrame,
  encodeSamplesFrame,
  samplesFrameLength,
} from '../../agent/framing/encoder.ts';
import { SAMPLE_FORMATS } from '../../agent/framing/protocol.ts';
import { concat } from './frame-stream.ts';
import { runPython } from './run-python.ts';

// An independent reader of the layout in agent/framing/PROTOCOL.md, written with python's struct, zlib.crc32
// (CRC-32/ISO-HDLC) and numpy dtypes ('<i2', '<i4', '<f4'; int24 sign-extended by hand). If the encoder drifts
// from the document, this disagrees.
const READER = `
import sys, struct, zlib, json
import numpy as np
b = sys.stdin.buffer.read()
out = []
i = 0
while i < len(b):
    assert b[i:i+4] == bytes([0xFA, 0x57, 0x0D, 0xB1]), 'sync'
    version, kind, length = struct.unpack_from('<BBH', b, i + 4)
    body = b[i+8:i+8+length]
    (crc,) = struct.unpack_from('<I', b, i + 8 + length)
    assert crc == zlib.crc32(b[i+4:i+8+length]), 'crc'
    rec = {'version': version, 'kind': kind}
    if kind == 1:
        ch, fmt, seq = struct.unpack_from('<BBI', body, 0)
        raw = body[6:]
        if fmt == 2:
            a = np.frombuffer(raw, dtype=np.uint8).reshape(-1, 3).astype(np.int32)
            v = a[:, 0] | (a[:, 1] << 8) | (a[:, 2] << 16)
            v = np.where(v >= 1 << 23, v - (1 << 24), v)
        else:
            v = np.frombuffer(raw, dtype={1: '<i2', 3: '<i4', 4: '<f4'}[fmt]).astype(np.float64)
        rec.update(channels=ch, format=fmt, sequence=seq, values=v.reshape(-1, ch).T.tolist())
    elif kind == 2:
        rec['descriptor'] = json.loads(body.decode('utf-8'))
    else:
        rec['length'] = length
    out.append(rec)
    i += 12 + length
print(json.dumps(out))
`;

describe('frame layout', () => {
  it('is read by an independent python reader of PROTOCOL.md: samples in all four formats, descriptor, request', () => {
    const parts: Uint8Array[] = [];
    const expected: unknown[] = [];
    SAMPLE_FORMATS.forEach((format, k) => {
      const data = [Float64Array.of(0, 1, -1, 32767, -32768, 1234), Float64Array.of(-5, 7, 100, -100, 2, 3)];
      if (format === 'int24' || format === 'int32' || format === 'float32') data[1][0] = -8388608;
      if (format === 'int32') data[0][2] = -2147483648;
      if (format === 'float32') data[0][5] = 0.15625;
      const bytes = new Uint8Array(samplesFrameLength(2, format, 6));
      encodeSamplesFrame(bytes, 0, 0xfffffff0 + k, format, data, 0, 6);
      parts.push(bytes);
      expected.push({
        version: 1,
        kind: 1,
        channels: 2,
        format: k + 1,
        sequence: 0xfffffff0 + k,
        values: data.map((a) => Array.from(a)),
      });
    });
    const d = {
      rate: 20000,
      format: 'int24' as const,
      board: 'bench-board',
      firmware: '1.0',
      boot: 'ff01',
      clock: 7,
      channels: [{ name: 'a', unit: 'V', perCount: 1e-6, fullScale: 8388607 }],
    };
    parts.push(encodeDescriptorFrame(d), encodeDescribeRequest());
    expected.push({ version: 1, kind: 2, descriptor: d }, { version: 1, kind: 16, length: 0 });
    expect(JSON.parse(runPython(READER, concat(parts)))).toEqual(expected);
  });

  it('saturates integer samples at the format end codes and rounds to nearest', () => {
    // Two's complement limits of 16 bits: −32768..32767 (common practice for ADC end codes).
    const data = [Float64Array.of(40000.2, -40000, 1.5, -2.4)];
    const bytes = new Uint8Array(samplesFrameLength(1, 'int16', 4));
    encodeSamplesFrame(bytes, 0, 0, 'int16', data, 0, 4);
    const got = JSON.parse(runPython(READER, bytes)) as { values: number[][] }[];
    expect(got[0].values[0]).toEqual([32767, -32768, 2, -2]);
  });
});
