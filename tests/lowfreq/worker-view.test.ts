// The low-frequency view on worker threads against the one on the agent's thread, on real pipelines fed by real
// blocks: the same contexts and updates in the same order (three channels over two workers, a gap, a replay
// seam, a slot pool small enough that the agent has to wait), a bounded (live) run that leaves blocks out and
// counts them instead of queueing, and a worker that fails. The densities are checked against the white level
// of the Gaussian samples, σ·√(2/fs) (one-sided density of white noise, common practice).
import { describe, expect, it } from 'vitest';
import { Pipeline } from '../../agent/pipeline/pipeline.ts';
import { LiveLowFrequency } from '../../agent/lowfreq/live-low-frequency.ts';
import { WorkerLowFrequency } from '../../agent/lowfreq/worker-low-frequency.ts';
import type { LowFrequencyContext, LowFrequencyUpdate } from '../../protocol/low-frequency-messages.ts';
import type { StreamInfo } from '../../protocol/stream.ts';
import { SeededRandom } from '../../dsp/random.ts';

const FS = 1000;
const SIGMA = [2e-6, 5e-6, 1e-6];
const info: StreamInfo = {
  sampleRate: FS,
  channels: SIGMA.map((_, c) => ({ name: `ch${c}`, unit: 'V', scale: 1, fullScaleCounts: Infinity })),
  source: { kind: 'replay', label: 'test' },
  firstSample: 0,
};

function record(view: { onContext: LiveLowFrequency['onContext']; onUpdate: LiveLowFrequency['onUpdate'] }) {
  const contexts: LowFrequencyContext[] = [];
  const updates: LowFrequencyUpdate[] = [];
  view.onContext((c) => contexts.push(structuredClone(c)));
  view.onUpdate((u) => updates.push(structuredClone(u)));
  return { contexts, updates };
}

/** 60 s per channel, fed in odd-sized blocks, with a 0.7 s hole at 25 s and a replay seam at the end. */
function feed(pipeline: Pipeline): void {
  const n = 60 * FS;
  const x = SIGMA.map((s, c) => new SeededRandom(40 + c).fillGaussian(new Float64Array(n), s));
  pipeline.info(info);
  const push = (offset: number, from: number, to: number, block: number): void => {
    for (let at = from; at < to; at += block) {
      const len = Math.min(block, to - at);
      pipeline.block({ firstSample: offset + at, frames: len, data: x.map((v) => v.slice(at, at + len)) });
    }
  };
  push(0, 0, 25 * FS, 1500);
  push(0, 25 * FS + 700, n, 2300); // the pipeline sees the jump as a discontinuity
  pipeline.gap({ sample: n, lost: 0, reason: 'loop', restartsAt: 0 });
  push(n, 0, 20 * FS, 4096);
}

describe('WorkerLowFrequency', () => {
  it('gives the one-thread frames, in order, with the agent waiting for its few slots (lossless)', async () => {
    const pipeline = new Pipeline({ mode: 'lossless' });
    const local = new LiveLowFrequency().attach(pipeline);
    const failures: string[] = [];
    const workers = new WorkerLowFrequency({
      threads: 2,
      mode: 'lossless',
      slots: 2,
      slotFrames: 1000,
      onFailure: (m) => failures.push(m),
    }).attach(pipeline);
    const one = record(local);
    const two = record(workers);
    feed(pipeline);
    pipeline.end();
    await workers.close();
    expect(failures).toEqual([]);
    expect(workers.droppedBlocks).toBe(0);
    // Instants every 500 samples: 120 in the first 60 s less the one inside the hole, then 40 after the seam.
    expect(one.updates.length).toBe(159);
    expect(two.contexts).toEqual(one.contexts);
    expect(two.updates).toEqual(one.updates);
    expect(workers.latest()).toEqual(local.latest());
    expect(workers.status()).toEqual(local.status());
    // Source: white noise of standard deviation σ sampled at fs has the one-sided density σ²·2/fs (common practice).
    const last = one.updates.find((u) => u.sample === 60 * FS - 1)!;
    const ctx = one.contexts[0];
    SIGMA.forEach((s, c) => {
      const asd = last.channels[c].asd.filter((a, p) => a !== null && ctx.frequency[p] > 5 && ctx.frequency[p] < 200);
      const median = (asd as number[]).sort((a, b) => a - b)[asd.length >> 1];
      expect(Math.abs(median / (s * Math.sqrt(2 / FS)) - 1)).toBeLessThan(0.1);
    });
  }, 120_000);

  it('in bounded (live) mode leaves blocks out for every worker and counts them instead of waiting', async () => {
    const failures: string[] = [];
    const view = new WorkerLowFrequency({
      threads: 2,
      mode: 'bounded',
      slots: 1,
      slotFrames: 16384,
      onFailure: (m) => failures.push(m),
    });
    const pipeline = new Pipeline({ mode: 'lossless' });
    view.attach(pipeline);
    const got = record(view);
    pipeline.info(info);
    const x = new SeededRandom(5).fillGaussian(new Float64Array(16384), 1e-6);
    const started = performance.now();
    // 40 pieces back to back: far faster than a worker analyses one, so most find their slot still in use.
    for (let b = 0; b < 40; b++) pipeline.block({ firstSample: b * 16384, frames: 16384, data: [x, x, x] });
    const pushing = performance.now() - started;
    pipeline.end();
    await view.close();
    expect(failures).toEqual([]);
    expect(view.droppedBlocks).toBeGreaterThan(0);
    expect(view.droppedBlocks).toBeLessThan(40);
    expect(pushing).toBeLessThan(10_000); // never waited out a worker
    // Whatever was analysed came out whole: every update has all three channels, in sample order.
    expect(got.updates.length).toBeGreaterThan(0);
    for (let k = 1; k < got.updates.length; k++)
      expect(got.updates[k].sample).toBeGreaterThan(got.updates[k - 1].sample);
    expect(got.updates.every((u) => u.channels.map((c) => c.name).join() === 'ch0,ch1,ch2')).toBe(true);
  }, 60_000);

  it('stops with one message when a worker fails, and lets the stream go on', async () => {
    const failures: string[] = [];
    // A span the estimator refuses makes the worker throw when the stream starts.
    const view = new WorkerLowFrequency({
      threads: 2,
      mode: 'lossless',
      slots: 2,
      slotFrames: 1000,
      view: { spanSeconds: -1 },
      onFailure: (m) => failures.push(m),
    });
    const pipeline = new Pipeline({ mode: 'lossless' });
    const plain = new Pipeline({ mode: 'lossless' }); // the same stream without any view
    view.attach(pipeline);
    const snapshots = [0, 0];
    pipeline.on('snapshot', () => snapshots[0]++);
    plain.on('snapshot', () => snapshots[1]++);
    const x = new SeededRandom(6).fillGaussian(new Float64Array(1000), 1e-6);
    for (const p of [pipeline, plain]) {
      p.info(info);
      for (let b = 0; b < 30; b++) p.block({ firstSample: b * 1000, frames: 1000, data: [x, x, x] });
      p.end();
    }
    await view.close();
    expect(failures.length).toBe(1);
    expect(failures[0]).toMatch(/low-frequency view stopped: .*spanSeconds must be positive.*go on without it/);
    expect(view.status()).toEqual([]);
    expect(snapshots[0]).toBe(snapshots[1]); // the pipeline went on past the dead worker
    expect(snapshots[0]).toBeGreaterThan(0);
  }, 60_000);
});
