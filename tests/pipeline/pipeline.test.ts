// The pipeline's spectra against scipy.signal.welch on the same samples, and its sample-time rules.
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { Pipeline, type PipelineOptions } from '../../agent/pipeline/pipeline.ts';
import type { SpectrumSnapshot, ClipNotice, OverrunNotice } from '../../agent/pipeline/types.ts';
import type { GapNotice, StreamInfo } from '../../protocol/stream.ts';
import { SeededRandom } from '../../dsp/random.ts';
import { maxRelativeError, scipyWelch } from './scipy-welch.ts';
import { Python } from '../wav/support.ts';

let py: Python;
beforeAll(() => {
  py = new Python();
});
afterAll(() => py.close());

const RATE = 2048;
const SEGMENT = 256;
const STEP = 128; // 50 % overlap
const SCALE = [2.5e-6, 1e-3];

function streamInfo(firstSample = 0): StreamInfo {
  return {
    sampleRate: RATE,
    channels: [
      { name: 'ch0', unit: 'V', scale: SCALE[0], fullScaleCounts: 32768 },
      { name: 'ch1', unit: 'V', scale: SCALE[1], fullScaleCounts: 32768 },
    ],
    source: { kind: 'simulator', label: 'test' },
    firstSample,
    startWallTime: '2026-01-01T00:00:00.000Z',
  };
}

/** Seeded raw counts: Gaussian noise (σ 300 counts) plus a tone on ch1, rounded to whole counts like an ADC. */
function rawCounts(frames: number, seed = 7): Float64Array[] {
  const rng = new SeededRandom(seed);
  const a = new Float64Array(frames);
  const b = new Float64Array(frames);
  for (let i = 0; i < frames; i++) {
    a[i] = Math.round(300 * rng.gaussian());
    b[i] = Math.round(40 * rng.gaussian() + 2000 * Math.sin((2 * Math.PI * 187.3 * i) / RATE));
  }
  return [a, b];
}

/** Feeds data[from..to) in blocks whose sizes come from `sizes` (cycled). */
function feed(p: Pipeline, data: Float64Array[], from: number, to: number, sizes: number[], firstSample = from): void {
  let i = from;
  let k = 0;
  while (i < to) {
    const n = Math.min(sizes[k++ % sizes.length], to - i);
    p.block({ firstSample: firstSample + (i - from), frames: n, data: data.map((d) => d.slice(i, i + n)) });
    i += n;
  }
}

function collect(options: PipelineOptions = {}) {
  const p = new Pipeline({
    analysis: { segment: SEGMENT, window: 'hann', overlap: 0.5, detrend: 'mean' },
    averaging: { mode: 'mean' },
    ...options,
  });
  const snaps: SpectrumSnapshot[] = [];
  const gaps: GapNotice[] = [];
  const clips: ClipNotice[] = [];
  const overruns: OverrunNotice[] = [];
  p.on('snapshot', (s) => snaps.push(s));
  p.on('gap', (g) => gaps.push(g));
  p.on('clip', (c) => clips.push(c));
  p.on('overrun', (o) => overruns.push(o));
  return { p, snaps, gaps, clips, overruns };
}

describe('Pipeline', () => {
  it('snapshot spectra equal scipy.signal.welch of the scaled samples up to the snapshot instant', async () => {
    const frames = 6 * RATE;
    const raw = rawCounts(frames);
    const { p, snaps } = collect();
    p.info(streamInfo());
    feed(p, raw, 0, frames, [1000]);
    p.end();
    expect(snaps.length).toBeGreaterThan(10);
    const chosen = [snaps[0], snaps[Math.floor(snaps.length / 2)], snaps[snaps.length - 1]];
    // Reference: scipy.signal.welch(x[:sample+1], fs, 'hann', nperseg=256, noverlap=128, detrend='constant'),
    // x = float32(raw · scale) (the precision recordings keep); scipy drops the trailing partial segment as we do.
    const refs = await scipyWelch(py, {
      channels: raw,
      fs: RATE,
      nperseg: SEGMENT,
      noverlap: SEGMENT - STEP,
      window: 'hann',
      detrend: 'constant',
      cases: chosen.map((s) => [[0, s.sample + 1]]),
      scale: SCALE,
      fround: true,
    });
    for (const [i, snap] of chosen.entries()) {
      const ref = refs[i];
      expect(snap.channels[0].segmentsUsed).toBe(ref.segments);
      for (let c = 0; c < 2; c++) expect(maxRelativeError(snap.channels[c].psd, ref.psd[c])).toBeLessThan(1e-9);
    }
  });

  it('takes snapshots only at samples s with (s + 1) mod round(rate / snapshotRate) = 0 and stamps t = s / rate', async () => {
    const frames = 5 * RATE;
    const raw = rawCounts(frames);
    const { p, snaps } = collect({ snapshotRate: 10 });
    p.info(streamInfo());
    feed(p, raw, 0, frames, [333, 17, 4096]);
    const interval = Math.round(RATE / 10); // 205 samples: the documented schedule
    expect(snaps.length).toBeGreaterThan(20);
    for (const s of snaps) {
      expect((s.sample + 1) % interval).toBe(0);
      expect(s.t).toBe(s.sample / RATE);
      // Label = start wall time + sample time (here the stream starts at sample 0).
      expect(s.wallTime).toBe(
        new Date(Date.parse('2026-01-01T00:00:00.000Z') + (s.sample / RATE) * 1000).toISOString(),
      );
      expect(s.channels[0].lastSegmentSample).toBeLessThanOrEqual(s.sample);
    }
  });

  it('gives bit-identical snapshots for any block sizes', async () => {
    const frames = 4 * RATE + 77;
    const raw = rawCounts(frames, 11);
    const runs: SpectrumSnapshot[][] = [];
    const rng = new SeededRandom(3);
    for (const sizes of [
      [frames],
      [1],
      [255, 256, 257],
      Array.from({ length: 50 }, () => 1 + Math.floor(rng.uniform() * 3000)),
    ]) {
      const { p, snaps } = collect({ averaging: { mode: 'exponential', tauSeconds: 0.5 } });
      p.info(streamInfo());
      feed(p, raw, 0, frames, sizes);
      runs.push(snaps);
    }
    for (const run of runs.slice(1)) {
      expect(run.map((s) => s.sample)).toEqual(runs[0].map((s) => s.sample));
      for (let i = 0; i < run.length; i++)
        for (let c = 0; c < 2; c++) expect(run[i].channels[c].psd).toEqual(runs[0][i].channels[c].psd);
    }
    // And the last one is still scipy's answer for mean averaging (same samples, one run).
    const { p, snaps } = collect();
    p.info(streamInfo());
    feed(p, raw, 0, frames, [1, 999, 5000]);
    const last = snaps[snaps.length - 1];
    const ref = (
      await scipyWelch(py, {
        channels: raw,
        fs: RATE,
        nperseg: SEGMENT,
        noverlap: SEGMENT - STEP,
        window: 'hann',
        detrend: 'constant',
        cases: [[[0, last.sample + 1]]],
        scale: SCALE,
        fround: true,
      })
    )[0];
    expect(maxRelativeError(last.channels[1].psd, ref.psd[1])).toBeLessThan(1e-9);
  });

  it('restarts segments at the first step multiple after a gap, so the estimate is the mean of both pieces', async () => {
    const frames = 6 * RATE;
    const raw = rawCounts(frames, 5);
    const gapAt = 2 * RATE + 100;
    const lost = 333;
    const { p, snaps, gaps } = collect();
    p.info(streamInfo());
    feed(p, raw, 0, gapAt, [512]);
    p.gap({ sample: gapAt, lost, reason: 'test' });
    feed(p, raw, gapAt + lost, frames, [512]);
    expect(gaps).toEqual([{ sample: gapAt, lost, reason: 'test' }]);
    expect(p.counters().lostSamples).toBe(lost);
    const last = snaps[snaps.length - 1];
    const resume = Math.ceil((gapAt + lost) / STEP) * STEP;
    // scipy.signal.welch on [0, gapAt) and on [resume, last.sample + 1), combined as the mean of all segments.
    const ref = (
      await scipyWelch(py, {
        channels: raw,
        fs: RATE,
        nperseg: SEGMENT,
        noverlap: SEGMENT - STEP,
        window: 'hann',
        detrend: 'constant',
        cases: [
          [
            [0, gapAt],
            [resume, last.sample + 1],
          ],
        ],
        scale: SCALE,
        fround: true,
      })
    )[0];
    expect(last.channels[0].segmentsUsed).toBe(ref.segments);
    for (let c = 0; c < 2; c++) expect(maxRelativeError(last.channels[c].psd, ref.psd[c])).toBeLessThan(1e-9);
  });

  it('treats a jump in block indices as a gap of the missing samples', async () => {
    const raw = rawCounts(3 * RATE);
    const { p, gaps } = collect();
    p.info(streamInfo());
    feed(p, raw, 0, RATE, [RATE]);
    feed(p, raw, RATE + 50, 3 * RATE, [RATE]);
    expect(gaps).toHaveLength(1);
    expect(gaps[0]).toMatchObject({ sample: RATE, lost: 50 });
  });

  it('counts samples within 0.1 % of full scale as clipped, as numpy counts |x| ≥ 0.999·FS', async () => {
    const raw = rawCounts(RATE);
    // Samples at, just inside and just outside the 0.1 % band below full scale (32768 counts): common practice.
    const marks: [number, number][] = [
      [10, 32767],
      [20, -32768],
      [30, 32735],
      [40, 32734],
      [50, -32736],
      [60, 32700],
    ];
    for (const [i, v] of marks) raw[0][i] = v;
    const { p, clips } = collect();
    p.info(streamInfo());
    feed(p, raw, 0, RATE, [RATE]);
    const threshold = 32768 * 0.999; // 32735.232
    const expected = raw[0].filter((v) => Math.abs(v) >= threshold).length;
    expect(expected).toBe(3); // 32767, -32768, -32736 (numpy: np.sum(np.abs(x) >= 0.999*32768))
    expect(clips).toHaveLength(1);
    expect(clips[0]).toMatchObject({
      channel: 'ch0',
      count: expected,
      firstSample: 10,
      lastSample: 50,
      peakCounts: 32768,
    });
    expect(p.counters().clippedSamples).toEqual([expected, 0]);
  });

  it('drops whole blocks when its bounded queue is full, counts them, and restarts analysis after the hole', async () => {
    const frames = 40 * 256;
    const raw = rawCounts(frames, 9);
    // An unlimited slice budget makes one event-loop turn drain the whole queue (no wall-clock dependence).
    const { p, snaps, gaps, overruns } = collect({ mode: 'bounded', queueCapacity: 4, drainBudgetMs: Infinity });
    p.info(streamInfo());
    // 20 blocks arrive in one event-loop turn: 4 fit, 16 are dropped whole; then the same again.
    feed(p, raw, 0, 20 * 256, [256]);
    expect(p.counters()).toMatchObject({ droppedBlocks: 16, droppedSamples: 16 * 256, queueDepth: 4 });
    await new Promise((r) => setImmediate(r));
    feed(p, raw, 20 * 256, frames, [256]);
    p.end();
    expect(p.counters()).toMatchObject({ droppedBlocks: 32, droppedSamples: 32 * 256, queueDepth: 0 });
    expect(overruns.map((o) => [o.sample, o.lost])).toEqual([
      [4 * 256, 16 * 256],
      [24 * 256, 16 * 256],
    ]);
    expect(gaps.map((g) => [g.sample, g.lost])).toEqual([[4 * 256, 16 * 256]]);
    // The analysed pieces are [0, 1024) and [5120, 6144) (up to the last snapshot instant): scipy.signal.welch's
    // mean over both.
    const last = snaps[snaps.length - 1];
    expect(last.sample).toBeGreaterThan(5120 + SEGMENT);
    const ref = (
      await scipyWelch(py, {
        channels: raw,
        fs: RATE,
        nperseg: SEGMENT,
        noverlap: SEGMENT - STEP,
        window: 'hann',
        detrend: 'constant',
        cases: [
          [
            [0, 1024],
            [5120, last.sample + 1],
          ],
        ],
        scale: SCALE,
        fround: true,
      })
    )[0];
    expect(last.channels[0].segmentsUsed).toBe(ref.segments);
    expect(maxRelativeError(last.channels[0].psd, ref.psd[0])).toBeLessThan(1e-9);
  });

  it('applies configure() at the next block: new settings, segments restart at the new step multiple', async () => {
    const frames = 6 * RATE;
    const raw = rawCounts(frames, 13);
    const { p, snaps } = collect();
    p.info(streamInfo());
    feed(p, raw, 0, 2 * RATE + 10, [1000]);
    p.configure({ analysis: { segment: 512 }, averaging: { mode: 'mean' } });
    expect(() => p.configure({ analysis: { segment: 1000 } })).toThrow(/power of two/);
    p.configure({ analysis: { segment: 512 }, averaging: { mode: 'mean' } });
    feed(p, raw, 2 * RATE + 10, frames, [1000], 2 * RATE + 10);
    const after = snaps.filter((s) => s.settings.segment === 512);
    expect(after.length).toBeGreaterThan(5);
    expect(snaps.filter((s) => s.settings.segment === 256).length).toBeGreaterThan(0);
    const last = after[after.length - 1];
    // The first block after configure() starts at 4106; segments of the new step (256) start at 4352.
    const resume = Math.ceil((2 * RATE + 10) / 256) * 256;
    // scipy.signal.welch(x[resume : sample + 1], nperseg=512, noverlap=256): the estimate after the change.
    const ref = (
      await scipyWelch(py, {
        channels: raw,
        fs: RATE,
        nperseg: 512,
        noverlap: 256,
        window: 'hann',
        detrend: 'constant',
        cases: [[[resume, last.sample + 1]]],
        scale: SCALE,
        fround: true,
      })
    )[0];
    expect(last.channels[0].segmentsUsed).toBe(ref.segments);
    expect(maxRelativeError(last.channels[0].psd, ref.psd[0])).toBeLessThan(1e-9);
  });

  it('starts the estimate over at a seam (a gap of 0 samples), as scipy.signal.welch of the samples after it', async () => {
    const frames = 5 * RATE;
    const raw = rawCounts(frames, 17);
    const { p, snaps, gaps } = collect();
    p.info(streamInfo());
    const seam = 2 * RATE + 5;
    feed(p, raw, 0, seam, [700]);
    p.gap({ sample: seam, lost: 0, reason: 'replay loop' });
    feed(p, raw, seam, frames, [700]);
    expect(gaps).toHaveLength(1);
    expect(p.counters()).toMatchObject({ gaps: 0, lostSamples: 0 });
    const last = snaps[snaps.length - 1];
    const resume = Math.ceil(seam / STEP) * STEP;
    // Only segments after the seam: scipy.signal.welch(x[resume : sample + 1]).
    const ref = (
      await scipyWelch(py, {
        channels: raw,
        fs: RATE,
        nperseg: SEGMENT,
        noverlap: SEGMENT - STEP,
        window: 'hann',
        detrend: 'constant',
        cases: [[[resume, last.sample + 1]]],
        scale: SCALE,
        fround: true,
      })
    )[0];
    expect(last.channels[0].segmentsUsed).toBe(ref.segments);
    expect(maxRelativeError(last.channels[0].psd, ref.psd[0])).toBeLessThan(1e-9);
  });
});
