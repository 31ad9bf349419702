import { afterAll, describe, expect, it } from 'vitest';
import { mkdtempSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { SerialSource } from '../../agent/sources/serial.ts';
import { CollectingSink, PtyPair, startSimulator, waitFor } from './pty-pair.ts';
import { firstMismatch, regenerateCounts } from './scenario-samples.ts';

// Simulator → socat pty pair → SerialSource on the real serialport package. Reference: the same scenario and
// seed regenerated in this process (the simulator is the protocol's reference encoder, PROTOCOL.md).
const dir = mkdtempSync(join(tmpdir(), 'fl-pty-'));
const pair = new PtyPair(join(dir, 'board'), join(dir, 'host'));
afterAll(() => pair.kill());

const RATE = 50000;
const SECONDS = 10;
const scenario = {
  rate: RATE,
  format: 'int24',
  board: 'pty test board',
  seed: 21,
  channels: [0, 1, 2, 3].map((c) => ({
    name: `in${c}`,
    unit: 'V',
    perCount: 1e-7,
    signals: [
      { kind: 'white', density: 50e-9 * (c + 1) },
      { kind: 'tone', frequency: 997 * (c + 1), rms: 1e-3 },
    ],
  })),
};

describe('serial source over a pty', () => {
  it('receives 4 ch × 50 kS/s int24 (200 kS/s) for 10 s bit-exact with zero loss', async () => {
    await pair.start();
    const scenarioPath = join(dir, 'scenario.json');
    writeFileSync(scenarioPath, JSON.stringify(scenario));
    const total = RATE * SECONDS;
    const sink = new CollectingSink(total);
    const source = new SerialSource({ port: pair.host, noDataSeconds: 5 });
    await source.start(sink);
    const sim = startSimulator([scenarioPath, '--out', pair.board, '--duration', String(SECONDS)]);
    const code = await sim.exited;
    expect(code, sim.stderr()).toBe(0);
    await waitFor('all samples', () => sink.delivered >= total, 20000).catch(() => undefined);
    await source.stop();
    const where = `first seen ${sink.seen.indexOf(1)}, last ${sink.lastIndex}, gaps ${JSON.stringify(sink.gaps)}, simulator: ${sim.stderr()}`;

    const c = source.counters();
    expect(sink.infos.length).toBe(1);
    expect(sink.infos[0].sampleRate).toBe(RATE);
    expect(sink.infos[0].channels.map((ch) => ch.name)).toEqual(['in0', 'in1', 'in2', 'in3']);
    expect(sink.gaps).toEqual([]);
    expect(c.lostSamples).toBe(0);
    expect(c.crcErrors).toBe(0);
    expect(c.syncErrors).toBe(0);
    expect(sink.delivered, where).toBe(total);
    expect(sink.outOfOrder).toBe(0);
    const { counts } = regenerateCounts(scenario, 21, total);
    expect(firstMismatch(sink.data, counts, sink.seen)).toBe(-1);
    expect(sink.ended).toBe(true);
  }, 60000);
});
