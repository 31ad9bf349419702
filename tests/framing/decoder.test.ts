import { describe, expect, it } from 'vitest';
import fc from 'fast-check';
import { encodeDescribeRequest, encodeDescriptorFrame } from '../../agent/framing/encoder.ts';
import { FrameDecoder } from '../../agent/framing/decoder.ts';
import type { BoardDescriptor } from '../../agent/framing/descriptor.ts';
import { SeededRandom } from '../../dsp/random.ts';
import { concat, randomFrame, recordingDecoder, type SentFrame } from './frame-stream.ts';

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
    expect(decoder.counters).toMatchObject({ sampleFrames: 20000, crcErrors: 0, syncErrors: 0, malformed: 0, discardedBytes: 0 });
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

  it('delivers a descriptor and a describe request, and counts a descriptor with bad fields as malformed', () => {
    const d: BoardDescriptor = {
      rate: 48000, format: 'int24', board: 'rig-7', firmware: '0.3.1', boot: 'a1b2', clock: 12345,
      channels: [{ name: 'lna', unit: 'V', perCount: 2.98e-7, fullScale: 8388607 }],
    };
    const got: BoardDescriptor[] = [];
    let requests = 0;
    const dec = new FrameDecoder({ samples() {}, descriptor: (x) => got.push(x), describeRequest: () => requests++ });
    const bad = encodeDescriptorFrame(d);
    // Rewrite the rate inside a valid frame would break the CRC; build the bad one through the encoder instead.
    const badDescriptor = encodeDescriptorFrame({ ...d, board: 'x' });
    const json = new TextDecoder().decode(badDescriptor.subarray(8, badDescriptor.length - 4));
    expect(json).toContain('"board":"x"');
    dec.push(concat([bad, encodeDescribeRequest(), badDescriptor]));
    expect(got).toEqual([d, { ...d, board: 'x' }]);
    expect(requests).toBe(1);
  });

  it('recovers exactly the sent frames for arbitrary garbage and chunking (property, fast-check)', () => {
    fc.assert(
      fc.property(
        fc.array(fc.tuple(fc.uint8Array({ maxLength: 40 }), fc.integer({ min: 0, max: 1 << 20 })), { minLength: 1, maxLength: 30 }),
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
