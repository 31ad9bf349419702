import { describe, expect, it } from 'vitest';
import fc from 'fast-check';
import { encodeDescribeRequest, encodeDescriptorFrame } from '../../agent/framing/encoder.ts';
import { CRC_WORK_PER_BYTE, FrameDecoder } from '../../agent/framing/decoder.ts';
import type { BoardDescriptor } from '../../agent/framing/descriptor.ts';
import { SeededRandom } from '../../dsp/random.ts';
import { concat, randomFrame, recordingDecoder, type SentFrame } from './frame-stream.ts';
import { crc32 } from '../../agent/framing/crc32.ts';
import {
  KIND_DESCRIPTOR,
  KIND_SAMPLES,
  MAX_BODY,
  MAX_FRAME,
  SERIAL_PROTOCOL_VERSION,
  SYNC,
} from '../../agent/framing/protocol.ts';

const GOOD: BoardDescriptor = {
  rate: 48000,
  format: 'int24',
  board: 'rig-7',
  firmware: '0.3.1',
  boot: 'a1b2',
  clock: 12345,
  channels: [{ name: 'lna', unit: 'V', perCount: 2.98e-7, fullScale: 8388607 }],
};

const text = (s: string): Uint8Array => new TextEncoder().encode(s);

/** A frame of `kind` around `body` with a correct CRC (PROTOCOL.md layout), written here rather than by the
 * encoder, which refuses bad content. `lengthField` lets a test lie about the body length. */
function frameOf(kind: number, body: Uint8Array, lengthField = body.length): Uint8Array {
  const out = new Uint8Array(8 + body.length + 4);
  out.set(SYNC, 0);
  out[4] = SERIAL_PROTOCOL_VERSION;
  out[5] = kind;
  out[6] = lengthField & 0xff;
  out[7] = (lengthField >>> 8) & 0xff;
  out.set(body, 8);
  const crc = crc32(out, 4, 8 + body.length);
  new DataView(out.buffer).setUint32(8 + body.length, crc, true);
  return out;
}
const descriptorBody = (body: Uint8Array): Uint8Array => frameOf(KIND_DESCRIPTOR, body);
const descriptorJson = (value: unknown): Uint8Array => descriptorBody(text(JSON.stringify(value)));
/** Samples body: channel count, format code, sequence (u32), then `payload` zero bytes. */
function samplesBody(channels: number, formatCode: number, payload: number): Uint8Array {
  const body = new Uint8Array(6 + payload);
  body[0] = channels;
  body[1] = formatCode;
  return frameOf(KIND_SAMPLES, body);
}

function randomBytes(rng: SeededRandom, n: number): Uint8Array {
  const b = new Uint8Array(n);
  for (let i = 0; i < n; i++) b[i] = rng.nextUint32() & 0xff;
  return b;
}

function stream(seed: number, count: number, garbage = 0): { bytes: Uint8Array; sent: SentFrame[] } {
  const rng = new SeededRandom(seed);
  const parts: Uint8Array[] = [];
  const sent: SentFrame[] = [];
  let seq = 0;
  for (let i = 0; i < count; i++) {
    if (garbage > 0) parts.push(randomBytes(rng, rng.nextUint32() % garbage));
    const f = randomFrame(rng, seq);
    parts.push(f.bytes);
    sent.push(f.sent);
    seq = (seq + f.sent.frames) >>> 0;
  }
  return { bytes: concat(parts), sent };
}

// These properties come from the protocol contract in agent/framing/PROTOCOL.md (frames are self-delimiting,
// CRC-protected, and the decoder resumes the sync search one byte after a rejected candidate).
describe('FrameDecoder', () => {
  it('decodes 20 000 frames pushed as one buffer, with no error counted', () => {
    const { bytes, sent } = stream(1, 20000);
    const { decoder, got } = recordingDecoder();
    decoder.push(bytes);
    expect(got).toEqual(sent);
    expect(decoder.counters).toMatchObject({
      sampleFrames: 20000,
      crcErrors: 0,
      syncErrors: 0,
      malformed: 0,
      discardedBytes: 0,
    });
    expect(decoder.pending).toBe(0);
  });

  it('decodes a frame split at every byte offset exactly once', () => {
    const rng = new SeededRandom(2);
    const a = randomFrame(rng, 100);
    const b = randomFrame(rng, 200);
    const both = concat([a.bytes, b.bytes]);
    for (let k = 0; k <= both.length; k++) {
      const { decoder, got } = recordingDecoder();
      decoder.push(both.subarray(0, k));
      decoder.push(both.subarray(k));
      expect(got).toEqual([a.sent, b.sent]);
    }
  });

  it('recovers every frame after garbage, across random chunk boundaries', () => {
    const { bytes, sent } = stream(3, 3000, 300);
    const rng = new SeededRandom(4);
    const { decoder, got } = recordingDecoder();
    let pos = 0;
    while (pos < bytes.length) {
      const n = Math.min(bytes.length - pos, rng.nextUint32() % 700);
      decoder.push(bytes.subarray(pos, pos + n));
      pos += n;
    }
    expect(got).toEqual(sent);
    expect(decoder.counters.syncErrors).toBeGreaterThan(2000);
  });

  it('survives 4 MB of random bytes without throwing, delivering nothing', () => {
    const rng = new SeededRandom(5);
    const { decoder, got } = recordingDecoder();
    for (let i = 0; i < 64; i++) decoder.push(randomBytes(rng, 65536));
    // A random 4-byte sync plus header plus matching CRC is ~2^-64 per position: none expected.
    expect(got.length).toBe(0);
    expect(decoder.counters.discardedBytes).toBeGreaterThan(4_000_000);
  });

  it('loses only the frame whose byte was corrupted and counts one CRC error', () => {
    const rng = new SeededRandom(6);
    const frames = [randomFrame(rng, 0), randomFrame(rng, 40), randomFrame(rng, 80)];
    const bytes = concat(frames.map((f) => f.bytes));
    bytes[frames[0].bytes.length + 12] ^= 0x20; // inside the second frame's body
    const { decoder, got } = recordingDecoder();
    decoder.push(bytes);
    expect(got).toEqual([frames[0].sent, frames[2].sent]);
    expect(decoder.counters.crcErrors).toBe(1);
  });

  it('finds a valid frame that starts inside a truncated one (no skip past the failed frame)', () => {
    const rng = new SeededRandom(7);
    const cut = randomFrame(rng, 0, 400);
    const following = Array.from({ length: 200 }, (_, i) => randomFrame(rng, 1000 + 40 * i));
    const bytes = concat([cut.bytes.subarray(0, 30), ...following.map((f) => f.bytes)]);
    // The cut frame's header promises more bytes than it has; the decoder decides on it (CRC fails) once that
    // many bytes have arrived, then resumes one byte after its sync word. Enough frames follow for that.
    expect(bytes.length).toBeGreaterThan(cut.bytes.length);
    for (const chunk of [bytes.length, 1, 13]) {
      const { decoder, got } = recordingDecoder();
      for (let p = 0; p < bytes.length; p += chunk) decoder.push(bytes.subarray(p, Math.min(bytes.length, p + chunk)));
      expect(got).toEqual(following.map((f) => f.sent));
      expect(decoder.counters.crcErrors).toBe(1);
    }
  });

  it('delivers a descriptor and a describe request', () => {
    const got: BoardDescriptor[] = [];
    let requests = 0;
    const dec = new FrameDecoder({ samples() {}, descriptor: (x) => got.push(x), describeRequest: () => requests++ });
    dec.push(concat([encodeDescriptorFrame(GOOD), encodeDescribeRequest()]));
    expect(got).toEqual([GOOD]);
    expect(requests).toBe(1);
    expect(dec.counters).toMatchObject({ descriptors: 1, malformed: 0, crcErrors: 0 });
  });

  // One case per check of the decoder (agent/framing/decoder.ts dispatch, agent/framing/descriptor.ts
  // validateDescriptor), each in a frame with a correct CRC, so only the content check can reject it.
  // The field named in the decoder's detail must be the one that is wrong.
  const ch = GOOD.channels[0];
  const malformed: [string, Uint8Array, string][] = [
    ['a body that is not UTF-8', descriptorBody(Uint8Array.from([0x7b, 0xff, 0xfe, 0x7d])), 'UTF-8 JSON'],
    ['a body that is not JSON', descriptorBody(text('{"rate": 48000,')), 'UTF-8 JSON'],
    ['a JSON array instead of an object', descriptorJson([GOOD]), 'not a JSON object'],
    ['rate zero', descriptorJson({ ...GOOD, rate: 0 }), '"rate"'],
    [
      'rate not finite (1e999 parses as Infinity)',
      descriptorBody(text(JSON.stringify({ ...GOOD, rate: 1 }).replace('"rate":1', '"rate":1e999'))),
      '"rate"',
    ],
    ['rate a string', descriptorJson({ ...GOOD, rate: '48000' }), '"rate"'],
    ['an absurd rate (above 10 MHz)', descriptorJson({ ...GOOD, rate: 1e9 }), '"rate"'],
    ['a rate of 1e300 (finite, far above 10 MHz)', descriptorJson({ ...GOOD, rate: 1e300 }), '"rate"'],
    ['a rate of 1e-300 (positive, far below 0.001 Hz)', descriptorJson({ ...GOOD, rate: 1e-300 }), '"rate"'],
    ['an unknown format', descriptorJson({ ...GOOD, format: 'int12' }), '"format"'],
    ['board not a string', descriptorJson({ ...GOOD, board: 7 }), '"board"'],
    ['firmware not a string', descriptorJson({ ...GOOD, firmware: null }), '"firmware"'],
    ['boot not a string', descriptorJson({ ...GOOD, boot: ['a'] }), '"boot"'],
    ['a board name of 257 characters', descriptorJson({ ...GOOD, board: 'b'.repeat(257) }), '"board"'],
    ['a board name with a control character', descriptorJson({ ...GOOD, board: 'rig\u001b[2J' }), '"board"'],
    ['clock past 2^32 - 1', descriptorJson({ ...GOOD, clock: 2 ** 32 }), '"clock"'],
    ['zero channels', descriptorJson({ ...GOOD, channels: [] }), '"channels"'],
    [
      'an absurd channel count (65 > MAX_CHANNELS)',
      descriptorJson({ ...GOOD, channels: Array.from({ length: 65 }, () => ch) }),
      '"channels"',
    ],
    ['a channel that is not an object', descriptorJson({ ...GOOD, channels: [null] }), 'channels[0] is not an object'],
    [
      'a channel name that is not a string',
      descriptorJson({ ...GOOD, channels: [{ ...ch, name: 3 }] }),
      'channels[0].name',
    ],
    ['an empty channel name', descriptorJson({ ...GOOD, channels: [{ ...ch, name: '' }] }), 'channels[0].name'],
    [
      'a channel name of 65 characters',
      descriptorJson({ ...GOOD, channels: [{ ...ch, name: 'n'.repeat(65) }] }),
      'channels[0].name',
    ],
    [
      'a channel name with a control character',
      descriptorJson({ ...GOOD, channels: [{ ...ch, name: 'a\nb' }] }),
      'channels[0].name',
    ],
    [
      'a unit that is not a string',
      descriptorJson({ ...GOOD, channels: [{ ...ch, unit: { si: 'V' } }] }),
      'channels[0].unit',
    ],
    ['perCount above 1e20', descriptorJson({ ...GOOD, channels: [{ ...ch, perCount: 1e21 }] }), 'channels[0].perCount'],
    [
      'perCount not finite',
      descriptorBody(text(JSON.stringify(GOOD).replace('"perCount":2.98e-7', '"perCount":-1e999'))),
      'channels[0].perCount',
    ],
    [
      'fullScale past the format limit',
      descriptorJson({ ...GOOD, channels: [{ ...ch, fullScale: 2 ** 23 }] }),
      'channels[0].fullScale',
    ],
    ['a samples frame with 0 channels', samplesBody(0, 1, 4), 'channel count 0'],
    ['a samples frame with 65 channels', samplesBody(65, 1, 65 * 3), 'channel count 65'],
    ['a samples frame with an unknown format code', samplesBody(1, 0x7f, 4), 'format code 127'],
    ['a samples payload that is not whole instants', samplesBody(2, 1, 5), 'not a whole number'],
  ];

  it.each(malformed)('counts %s as malformed and delivers nothing from it', (_what, frame, field) => {
    const got: BoardDescriptor[] = [];
    const samples: number[] = [];
    const details: string[] = [];
    const dec = new FrameDecoder({
      samples: (f) => samples.push(f.frames),
      descriptor: (x) => got.push(x),
      malformed: (d) => details.push(d),
    });
    // The bad frame, then a good descriptor: the good one still arrives, the bad one leaves only its count.
    dec.push(concat([frame, encodeDescriptorFrame(GOOD)]));
    expect(dec.counters).toMatchObject({ frames: 2, malformed: 1, descriptors: 1, sampleFrames: 0, crcErrors: 0 });
    expect(got).toEqual([GOOD]);
    expect(samples).toEqual([]);
    expect(details).toHaveLength(1);
    expect(details[0]).toContain(field);
  });

  it('never delivers descriptor JSON larger than one frame body (65535 bytes, the u16 length field)', () => {
    const big = text(JSON.stringify({ ...GOOD, firmware: 'x'.repeat(MAX_BODY) }));
    // A sender that writes only the low 16 bits of the length and a CRC over the whole body: the decoder reads
    // the short length, the CRC there does not match, and nothing is delivered.
    const got: BoardDescriptor[] = [];
    const dec = new FrameDecoder({ samples() {}, descriptor: (x) => got.push(x) });
    dec.push(concat([frameOf(KIND_DESCRIPTOR, big, big.length & 0xffff), encodeDescriptorFrame(GOOD)]));
    expect(got).toEqual([GOOD]);
    expect(dec.counters.descriptors).toBe(1);
    expect(dec.counters.crcErrors).toBeGreaterThanOrEqual(1);
  });

  // A flood of false sync words, each promising the largest body (65535 bytes), one every 8 bytes: checked one by
  // one, each costs a CRC over 64 KiB for 8 bytes of input (about 8000 bytes of work per byte). The decoder's
  // stated bound is CRC_WORK_PER_BYTE bytes of failed checks per byte received, plus a few largest frames.
  it('bounds the work a flood of false 64 KiB headers costs, and still delivers the real frames inside it', () => {
    const fake = new Uint8Array(8);
    fake.set(SYNC, 0);
    fake[4] = SERIAL_PROTOCOL_VERSION;
    fake[5] = KIND_SAMPLES;
    fake[6] = 0xff;
    fake[7] = 0xff;
    const flood = new Uint8Array(2 * 1024 * 1024);
    for (let i = 0; i < flood.length; i += 8) flood.set(fake, i);
    const rng = new SeededRandom(7);
    const parts: Uint8Array[] = [];
    const sent: SentFrame[] = [];
    let seq = 0;
    for (let k = 0; k < 16; k++) {
      // A real frame, then a slice of the flood: the board's frames must survive among the false headers.
      const f = randomFrame(rng, seq);
      parts.push(f.bytes, flood.subarray(k * 131072, (k + 1) * 131072));
      sent.push(f.sent);
      seq = (seq + f.sent.frames) >>> 0;
    }
    const tail = randomFrame(rng, seq);
    parts.push(tail.bytes);
    sent.push(tail.sent);
    const bytes = concat(parts);
    const { decoder, got } = recordingDecoder();
    for (let p = 0; p < bytes.length; p += 4096) decoder.push(bytes.subarray(p, Math.min(bytes.length, p + 4096)));
    const c = decoder.counters;
    expect(c.failedCheckBytes).toBeLessThanOrEqual(CRC_WORK_PER_BYTE * c.bytes + 4 * MAX_FRAME);
    expect(c.unchecked).toBeGreaterThan(0);
    // Every real frame whose length was seen before is still checked and delivered; the first real frame of the
    // stream comes before the flood. Frames longer than any seen may be skipped while the budget is spent.
    const delivered = got.map((g) => g.sequence);
    expect(delivered[0]).toBe(sent[0].sequence);
    expect(got.length).toBeGreaterThanOrEqual(sent.length - 8);
    for (const g of got) expect(sent).toContainEqual(g);
  });

  it('recovers exactly the sent frames for arbitrary garbage and chunking (property, fast-check)', () => {
    fc.assert(
      fc.property(
        fc.array(fc.tuple(fc.uint8Array({ maxLength: 40 }), fc.integer({ min: 0, max: 1 << 20 })), {
          minLength: 1,
          maxLength: 30,
        }),
        fc.array(fc.integer({ min: 1, max: 97 }), { minLength: 1, maxLength: 20 }),
        (pieces, chunks) => {
          const rng = new SeededRandom(pieces.length);
          const parts: Uint8Array[] = [];
          const sent: SentFrame[] = [];
          for (const [garbage, seq] of pieces) {
            parts.push(garbage);
            const f = randomFrame(rng, seq, 8);
            parts.push(f.bytes);
            sent.push(f.sent);
          }
          const bytes = concat(parts);
          const { decoder, got } = recordingDecoder();
          let p = 0;
          for (let i = 0; p < bytes.length; i++) {
            const n = chunks[i % chunks.length];
            decoder.push(bytes.subarray(p, Math.min(bytes.length, p + n)));
            p += n;
          }
          expect(got).toEqual(sent);
        },
      ),
      { seed: 42, numRuns: 300 },
    );
  });
});
