import { describe, expect, it } from 'vitest';
import { SampleSequencer } from '../../agent/sources/sample-sequencer.ts';
import { FrameDecoder } from '../../agent/framing/decoder.ts';
import { encodeDescriptorFrame, encodeSamplesFrame, samplesFrameLength } from '../../agent/framing/encoder.ts';
import type { BoardDescriptor } from '../../agent/framing/descriptor.ts';
import { CollectingSink } from './pty-pair.ts';

// The host rules of PROTOCOL.md ("Host behaviour"): sequence jumps are gaps of exactly that many instants,
// modulo 2^32; a new boot restarts the count; stale duplicates are dropped; frames before the descriptor wait.
const desc = (boot: string): BoardDescriptor => ({
  rate: 1000,
  format: 'int16',
  board: 'b',
  firmware: 'f',
  boot,
  clock: 0,
  channels: [{ name: 'a', unit: 'V', perCount: 0.001, fullScale: 32767 }],
});

function frame(seq: number, values: number[]): Uint8Array {
  const out = new Uint8Array(samplesFrameLength(1, 'int16', values.length));
  encodeSamplesFrame(out, 0, seq, 'int16', [Float64Array.from(values)], 0, values.length);
  return out;
}

function setup(): { push: (b: Uint8Array) => void; sink: CollectingSink; seq: SampleSequencer } {
  const sink = new CollectingSink(100000);
  const seq = new SampleSequencer(sink, 'test');
  const dec = new FrameDecoder({ samples: (f) => seq.onFrame(f), descriptor: (d) => seq.onDescriptor(d) });
  return { push: (b) => (dec.push(b), seq.flush()), sink, seq };
}

describe('SampleSequencer', () => {
  it('holds frames that arrive before the descriptor and delivers them from sample 0', () => {
    const { push, sink } = setup();
    push(frame(500, [1, 2, 3]));
    expect(sink.infos.length).toBe(0);
    push(encodeDescriptorFrame(desc('x')));
    push(frame(503, [4]));
    expect(sink.infos.length).toBe(1);
    expect(Array.from(sink.data[0].subarray(0, 4))).toEqual([1, 2, 3, 4]);
    expect(sink.gaps).toEqual([]);
  });

  it('turns a sequence jump across the 2^32 wrap into a gap of exactly the missing instants', () => {
    const { push, sink } = setup();
    push(encodeDescriptorFrame(desc('x')));
    push(frame(2 ** 32 - 2, [1, 2]));
    push(frame(3, [9])); // expected 0; 0, 1, 2 missing
    expect(sink.gaps).toEqual([{ sample: 2, lost: 3, reason: expect.stringContaining('3 instants') }]);
    expect(sink.data[0][5]).toBe(9);
  });

  it('drops a stale duplicate frame, and treats a new boot as a restart counted by its own sequence', () => {
    const { push, sink, seq } = setup();
    push(encodeDescriptorFrame(desc('x')));
    push(frame(0, [1, 2, 3, 4]));
    push(frame(2, [3, 4])); // stale bytes replayed after a reconnect
    expect(seq.counters.rejectedFrames).toBe(1);
    push(encodeDescriptorFrame(desc('y'))); // the board rebooted
    push(frame(7, [5]));
    expect(sink.gaps.map((g) => [g.sample, g.lost])).toEqual([[4, 7]]);
    expect(sink.gaps[0].reason).toContain('restarted');
    expect(sink.data[0][11]).toBe(5);
    expect(seq.counters.restarts).toBe(1);
  });
});
