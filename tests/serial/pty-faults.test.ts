import { afterAll, describe, expect, it } from 'vitest';
import { closeSync, mkdtempSync, openSync, writeFileSync, writeSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { SerialSource } from '../../agent/sources/serial.ts';
import { CollectingSink, PtyPair, startSimulator, waitFor } from './pty-pair.ts';
import { firstMismatch, regenerateCounts } from './scenario-samples.ts';

// Damage on the wire through a real pty: the scenario's link faults (agent/sim/SCENARIO.md) insert garbage,
// flip a byte in one frame and withhold two frames. PROTOCOL.md says: garbage costs nothing, a corrupt frame
// is one CRC error and a gap of its instants, withheld frames are a gap by the sequence counter.
const dir = mkdtempSync(join(tmpdir(), 'fl-pty-'));
const pair = new PtyPair(join(dir, 'board'), join(dir, 'host'));
afterAll(() => pair.kill());

const channels = [
  { name: 'p', perCount: 1e-6, signals: [{ kind: 'white', density: 1e-6 }] },
  {
    name: 'q',
    perCount: 1e-6,
    signals: [{ kind: 'mains', fundamental: 50, harmonics: [0.002, 0.0005], drift: { span: 0.1, period: 2 } }],
  },
];

describe('serial source on a damaged link', () => {
  it('counts garbage as one sync error and a flipped byte as one CRC error, losing only the damaged and withheld frames', async () => {
    const scenario = {
      rate: 20000,
      format: 'int32',
      seed: 9,
      channels,
      link: { garbage: [{ at: 1.0, bytes: 48 }], corrupt: [{ at: 2.0, bytes: 1 }], drop: [{ at: 3.0, frames: 2 }] },
    };
    await pair.start();
    const path = join(dir, 'faults.json');
    writeFileSync(path, JSON.stringify(scenario));
    const total = 20000 * 4;
    const sink = new CollectingSink(total);
    const source = new SerialSource({ port: pair.host });
    await source.start(sink);
    const sim = startSimulator([path, '--out', pair.board, '--duration', '4']);
    expect(await sim.exited, sim.stderr()).toBe(0);
    await waitFor('the last sample', () => sink.lastIndex >= total - 1, 15000);
    await source.stop();
    const d = source.detail().decoder!;
    expect(d.syncErrors).toBe(1);
    expect(d.crcErrors).toBe(1);
    // 10 ms frames at 20 kHz: 200 instants each; the corrupt frame at 2.0 s and the two withheld at 3.0 s.
    expect(sink.gaps.map((g) => [g.sample, g.lost])).toEqual([
      [40000, 200],
      [60000, 400],
    ]);
    expect(sink.delivered).toBe(total - 600);
    const { counts } = regenerateCounts(scenario, 9, total);
    expect(firstMismatch(sink.data, counts, sink.seen)).toBe(-1);
    await pair.kill();
  }, 60000);

  it('reads text mode (--format text --rate) with channel names from the header line, values exact', async () => {
    const scenario = { rate: 5000, format: 'int24', seed: 4, channels };
    await pair.start();
    const path = join(dir, 'text.json');
    writeFileSync(path, JSON.stringify(scenario));
    const total = 5000 * 3;
    const sink = new CollectingSink(total);
    const source = new SerialSource({ port: pair.host, format: 'text', rate: 5000 });
    await source.start(sink);
    const sim = startSimulator([path, '--out', pair.board, '--format', 'text', '--duration', '3']);
    expect(await sim.exited, sim.stderr()).toBe(0);
    await waitFor('the last sample', () => sink.lastIndex >= total - 1, 15000);
    await source.stop();
    expect(sink.infos[0].channels.map((c) => [c.name, c.unit, c.scale])).toEqual([
      ['p', 'V', 1],
      ['q', 'V', 1],
    ]);
    expect(sink.delivered).toBe(total);
    // Text carries volts printed shortest-round-trip (ECMAScript Number::toString), so parsing gives them back.
    const { volts } = regenerateCounts(scenario, 4, total);
    expect(firstMismatch(sink.data, volts, sink.seen)).toBe(-1);
  }, 60000);

  it('counts bad text lines in the source counters (status, /metrics and the health strip read them) and passes 1e999 on as +Inf', async () => {
    await pair.start();
    const source = new SerialSource({ port: pair.host, format: 'text', rate: 1000 });
    const sink = new CollectingSink(16);
    await source.start(sink);
    // Written straight to the board end of the pty: a header, good lines, and three bad ones (wrong count, a
    // word, an empty field). 1e999 is a well-formed number that overflows a double to +Inf (IEEE 754), so it is
    // delivered and left to the pipeline's non-finite policy.
    const board = openSync(pair.board, 'w');
    writeSync(board, 'a,b\n1,2\n3,4,5\nx,1\n1e999,0\n,\n6,7\n');
    closeSync(board);
    await waitFor('the last good line', () => sink.delivered >= 3, 10000);
    await source.stop();
    expect(source.counters().syncErrors).toBe(3);
    expect(Array.from(sink.data[0].subarray(0, 3))).toEqual([1, Infinity, 6]);
    await pair.kill();
  }, 60000);
});
