// Builds byte streams of random valid frames (with a record of what each carries) for the decoder tests.
import { encodeSamplesFrame, samplesFrameLength } from '../../agent/framing/encoder.ts';
import { FrameDecoder } from '../../agent/framing/decoder.ts';
import { formatFullScale, SAMPLE_FORMATS, type SampleFormat } from '../../agent/framing/protocol.ts';
import { decodeInterleaved as decodeFrame } from '../../agent/framing/samples.ts';
import { SeededRandom } from '../../dsp/random.ts';

export interface SentFrame {
  sequence: number;
  channels: number;
  format: SampleFormat;
  frames: number;
  /** Sum of all decoded values weighted by position: a cheap fingerprint of the payload. */
  fingerprint: number;
}

export function fingerprint(data: readonly Float64Array[], frames: number): number {
  let s = 0;
  for (let c = 0; c < data.length; c++) for (let i = 0; i < frames; i++) s += data[c][i] * (1 + c + 7 * i);
  return s;
}

export function randomFrame(
  rng: SeededRandom,
  sequence: number,
  maxFrames = 40,
): { bytes: Uint8Array; sent: SentFrame } {
  const channels = 1 + (rng.nextUint32() % 6);
  const format = SAMPLE_FORMATS[rng.nextUint32() % 4];
  const frames = 1 + (rng.nextUint32() % maxFrames);
  const fs = format === 'float32' ? 1e6 : formatFullScale(format);
  const data: Float64Array[] = [];
  for (let c = 0; c < channels; c++) {
    const a = new Float64Array(frames);
    for (let i = 0; i < frames; i++) {
      const v = (rng.uniform() * 2 - 1) * fs;
      a[i] = format === 'float32' ? Math.fround(v) : Math.round(v);
    }
    data.push(a);
  }
  const bytes = new Uint8Array(samplesFrameLength(channels, format, frames));
  encodeSamplesFrame(bytes, 0, sequence, format, data, 0, frames);
  return { bytes, sent: { sequence, channels, format, frames, fingerprint: fingerprint(data, frames) } };
}

export function concat(parts: Uint8Array[]): Uint8Array {
  let n = 0;
  for (const p of parts) n += p.length;
  const out = new Uint8Array(n);
  let o = 0;
  for (const p of parts) {
    out.set(p, o);
    o += p.length;
  }
  return out;
}

const scratch: Float64Array[] = [];
for (let c = 0; c < 64; c++) scratch.push(new Float64Array(1024));

/** A decoder that records every samples frame it delivers. */
export function recordingDecoder(): { decoder: FrameDecoder; got: SentFrame[] } {
  const got: SentFrame[] = [];
  const decoder = new FrameDecoder({
    samples(f) {
      // Decode the payload through the public helper to fingerprint it.
      decodeFrame(f.bytes, f.offset, f.format, f.channels, f.frames, scratch, 0);
      got.push({
        sequence: f.sequence,
        channels: f.channels,
        format: f.format,
        frames: f.frames,
        fingerprint: fingerprint(scratch.slice(0, f.channels), f.frames),
      });
    },
    descriptor() {},
  });
  return { decoder, got };
}
