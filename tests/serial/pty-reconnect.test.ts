import { afterAll, describe, expect, it } from 'vitest';
import { mkdtempSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { SerialSource } from '../../agent/sources/serial.ts';
import { CollectingSink, PtyPair, sleep, startSimulator, waitFor } from './pty-pair.ts';
import { firstMismatch, regenerateCounts } from './scenario-samples.ts';

// Unplug and replug, made real: kill socat mid-stream (both ptys vanish), start it again on the same paths.
// The simulated board keeps counting samples meanwhile, so the gap must equal what it produced while the link was
// down (PROTOCOL.md "Unplug and replug"), and every sample delivered must sit at its true index.
const dir = mkdtempSync(join(tmpdir(), 'fl-pty-'));
const pair = new PtyPair(join(dir, 'board'), join(dir, 'host'));
afterAll(() => pair.kill());

const RATE = 20000;
const SECONDS = 60;
const scenario = {
  rate: RATE,
  format: 'int16',
  board: 'replug board',
  seed: 5,
  channels: [
    { name: 'x', perCount: 1e-6, signals: [{ kind: 'white', density: 1e-6 }] },
    { name: 'y', perCount: 1e-6, signals: [{ kind: 'tone', frequency: 440, rms: 0.01 }] },
  ],
};

describe('serial source across an unplug', () => {
  it('reports link lost and back, counts the samples missed as a gap, and resumes bit-exact', async () => {
    await pair.start();
    const scenarioPath = join(dir, 'scenario.json');
    writeFileSync(scenarioPath, JSON.stringify(scenario));
    // The board streams until the test unplugs it for good (SECONDS is only a ceiling), so the outage cannot
    // outlast the run however slow the machine is; the run's length is then what arrived.
    const sink = new CollectingSink(RATE * SECONDS);
    const source = new SerialSource({ port: pair.host, noDataSeconds: 5, backoffMs: [50, 400] });
    await source.start(sink);
    const sim = startSimulator([scenarioPath, '--out', pair.board, '--duration', String(SECONDS)]);
    await waitFor('3 s of samples', () => sink.delivered >= 3 * RATE, 20000);
    await pair.kill();
    await waitFor('link lost', () => sink.links.length >= 1, 10000);
    // Keep the link down while the board goes on counting. How long does not matter to any check below: they
    // hold for any outage length, so a slow machine changes the size of the gap, never the verdict.
    await sleep(1000);
    await pair.start();
    await waitFor('link back', () => sink.links.length >= 2, 20000);
    const backAt = sink.lastIndex;
    await waitFor('1 s of samples after the link came back', () => sink.lastIndex >= backAt + RATE, 20000);
    expect(sim.proc.exitCode, `the simulated board survived the unplug: ${sim.stderr()}`).toBe(null);
    sim.proc.kill('SIGKILL');
    await sim.exited;
    await source.stop();
    const total = sink.lastIndex + 1;

    expect(sink.links.map((l) => l.state)).toEqual(['lost', 'back']);
    const lost = sink.gaps.reduce((s, g) => s + g.lost, 0);
    // The board counted on while the link was down, so something was lost, but never what was delivered before
    // the outage (≥ 3 s, waited for above) nor the second after the link came back.
    expect(lost).toBeGreaterThan(0);
    expect(lost).toBeLessThan(total - 3 * RATE);
    // Every index is either delivered or counted lost: nothing double, nothing missing.
    expect(sink.delivered + lost).toBe(total);
    expect(source.counters().lostSamples).toBe(lost);
    expect(source.counters().reconnects).toBeGreaterThanOrEqual(1);
    expect(sink.outOfOrder).toBe(0);
    const { counts } = regenerateCounts(scenario, 5, total);
    expect(firstMismatch(sink.data, counts, sink.seen)).toBe(-1);
    // The gap starts right after the last sample delivered before the outage.
    expect(sink.gaps[0].sample).toBe(sink.links[0].sample + 1);
  }, 60000);
});

describe('serial source watchdog', () => {
  it('closes and reopens after N s without data, and counts a restarted board by its own sequence', async () => {
    const pair2 = new PtyPair(join(dir, 'board2'), join(dir, 'host2'));
    await pair2.start();
    try {
      const scenarioPath = join(dir, 'scenario2.json');
      writeFileSync(scenarioPath, JSON.stringify({ ...scenario, rate: 10000 }));
      const sink = new CollectingSink(10000 * 6);
      const source = new SerialSource({ port: pair2.host, noDataSeconds: 2, backoffMs: [50, 200] });
      await source.start(sink);
      const first = startSimulator([scenarioPath, '--out', pair2.board, '--duration', '2']);
      expect(await first.exited, first.stderr()).toBe(0);
      await waitFor('link lost by the no-data watchdog', () => sink.links.length >= 1, 10000);
      expect(sink.links[0].detail).toContain('no data for 2 s');
      expect(sink.links[0].sample).toBe(19999);
      const delivered1 = sink.delivered;
      expect(delivered1).toBe(20000);
      // A second run is a board that was power-cycled: new boot, counter from 0.
      const second = startSimulator([scenarioPath, '--out', pair2.board, '--duration', '2']);
      expect(await second.exited, second.stderr()).toBe(0);
      await waitFor('second run delivered', () => sink.delivered >= 40000, 15000);
      await source.stop();
      expect(
        sink.links.map((l) => l.state),
        JSON.stringify(sink.links),
      ).toEqual(['lost', 'back']);
      expect(source.detail().sequencer!.restarts).toBe(1);
      const restart = sink.gaps.find((g) => g.reason.includes('restarted'))!;
      expect(restart.sample).toBe(20000);
      // The new boot's first frame we saw carries its sequence; that many instants count as lost.
      const { counts } = regenerateCounts({ ...scenario, rate: 10000 }, 5, 20000);
      const got = sink.data.map((d) => d.subarray(20000 + restart.lost, 40000 + restart.lost));
      const want = counts.map((c) => c.subarray(restart.lost, 20000));
      expect(got[0].subarray(0, want[0].length)).toEqual(want[0]);
      expect(got[1].subarray(0, want[1].length)).toEqual(want[1]);
    } finally {
      await pair2.kill();
    }
  }, 60000);
});
