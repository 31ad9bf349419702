// The pipeline with its analysis on a worker thread (threads 2) against the same pipeline on one thread, fed the
// same blocks and notices: every snapshot (densities, cross-spectra, coherence, segment counts, stamps), every
// gap, clip and block must be the same and in the same order. An identity check: the worker runs the same code
// on the same samples, so any difference is a hand-over fault (a lost, repeated or reordered piece). One check
// ties the two-thread run to an outside value too: its densities equal scipy.signal.welch on the same samples.
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { Pipeline } from '../../agent/pipeline/pipeline.ts';
import type { SpectrumSnapshot } from '../../agent/pipeline/types.ts';
import { REMOTE_BLOCK_FRAMES } from '../../agent/workers/remote-analyser.ts';
import type { StreamInfo } from '../../protocol/stream.ts';
import { SeededRandom } from '../../dsp/random.ts';
import { maxRelativeError, scipyWelch } from './scipy-welch.ts';
import { Python } from '../wav/support.ts';

let py: Python;
beforeAll(() => {
  py = new Python();
});
afterAll(() => py.close());

const RATE = 4000;
const SCALE = [1e-6, 2e-6, 5e-7];

function streamInfo(): StreamInfo {
  return {
    sampleRate: RATE,
    channels: SCALE.map((scale, i) => ({ name: `ch${i}`, unit: 'V', scale, fullScaleCounts: 32768 })),
    source: { kind: 'replay', label: 'test' },
    firstSample: 0,
    startWallTime: '2026-01-01T00:00:00.000Z',
  };
}

/** Three channels sharing a common tone and part of their noise, so the cross-spectra and coherence are not trivial;
 * ch2 clips now and then (counts beyond ±32767). */
function rawCounts(frames: number, seed: number): Float64Array[] {
  const rng = new SeededRandom(seed);
  const ch = SCALE.map(() => new Float64Array(frames));
  for (let i = 0; i < frames; i++) {
    const shared = 200 * rng.gaussian();
    const tone = 900 * Math.sin((2 * Math.PI * 311.7 * i) / RATE);
    ch[0][i] = Math.round(shared + 300 * rng.gaussian() + tone);
    ch[1][i] = Math.round(0.5 * shared + 250 * rng.gaussian());
    ch[2][i] = Math.round(shared + 100 * rng.gaussian() + (i % 50_000 < 3 ? 40_000 : 0));
  }
  return ch;
}

interface Trace {
  lines: string[];
  snaps: SpectrumSnapshot[];
  onWorker: boolean;
}

/** Runs one scripted stream through a pipeline of `threads` and writes down everything it says, in order. */
function run(threads: number): Trace {
  const p = new Pipeline({
    analysis: { segment: 1024, window: 'hann', overlap: 0.5, detrend: 'mean' },
    averaging: { mode: 'exponential', tauSeconds: 2 },
    threads,
  });
  const lines: string[] = [];
  const snaps: SpectrumSnapshot[] = [];
  p.on('snapshot', (s) => {
    snaps.push(s);
    lines.push(`snapshot ${s.sequence} ${s.sample}`);
  });
  p.on('block', (b) => lines.push(`block ${b.firstSample} ${b.frames} ${b.data[0][0]} ${b.data[2][b.frames - 1]}`));
  p.on('gap', (g) => lines.push(`gap ${JSON.stringify(g)}`));
  p.on('clip', (c) => lines.push(`clip ${JSON.stringify(c)}`));
  p.on('nonfinite', (n) => lines.push(`nonfinite ${JSON.stringify(n)}`));
  p.on('event', (e) => lines.push(`event ${e.rule} ${e.state} ${e.sample}`));
  p.info(streamInfo());
  const onWorker = p.analysisOnWorker;
  const raw = rawCounts(400_000, 15);
  let sample = 0;
  const send = (from: number, n: number) => {
    p.block({ firstSample: sample, frames: n, data: raw.map((d) => d.slice(from, from + n)) });
    sample += n;
  };
  // Blocks of odd sizes, one longer than the worker takes at once (it goes over in pieces).
  for (const n of [1, 777, 4096, 12_345, REMOTE_BLOCK_FRAMES + 4321, 999]) send(sample, n);
  // A seam without lost samples (a replay looping), then a real gap of 5000 samples.
  p.gap({ sample, lost: 0, reason: 'loop' });
  send(sample, 20_000);
  p.gap({ sample, lost: 5000, reason: 'reconnect' });
  sample += 5000;
  send(sample, 30_000);
  // A discontinuity the source did not announce.
  sample += 1234;
  send(sample, 25_000);
  // Non-finite samples in the middle of a block: they are excluded like a gap and raise the health alarm.
  const bad = raw.map((d) => d.slice(sample, sample + 16_000));
  bad[1][7000] = NaN;
  bad[0][7001] = Infinity;
  p.block({ firstSample: sample, frames: 16_000, data: bad });
  sample += 16_000;
  send(sample, 30_000);
  // New settings the worker's memory holds (a shorter segment), then ones it does not (a longer one).
  p.configure({ analysis: { segment: 512, window: 'hft95', overlap: 0.75 } });
  send(sample, 40_000);
  p.configure({ analysis: { segment: 4096, window: 'hann', overlap: 0.5 }, averaging: { mode: 'mean' } });
  send(sample, 60_000);
  p.end();
  return { lines, snaps, onWorker };
}

describe('analysis on a worker thread', () => {
  const one = run(1);
  const two = run(2);

  it('is used at 2 threads in lossless mode and not at 1', () => {
    expect(one.onWorker).toBe(false);
    expect(two.onWorker).toBe(true);
  });

  it('gives the same blocks, gaps, clips, alarms and snapshots in the same order as one thread', () => {
    expect(one.lines.filter((l) => l.startsWith('snapshot')).length).toBeGreaterThan(300);
    expect(one.lines.some((l) => l.startsWith('clip'))).toBe(true);
    expect(one.lines.some((l) => l.startsWith('nonfinite'))).toBe(true);
    expect(one.lines.some((l) => l.startsWith('event nonfinite cleared'))).toBe(true);
    expect(two.lines).toEqual(one.lines);
  });

  it('gives bit-identical densities, cross-spectra and coherence in every snapshot', () => {
    expect(two.snaps.length).toBe(one.snaps.length);
    for (let i = 0; i < one.snaps.length; i++) {
      const a = one.snaps[i];
      const b = two.snaps[i];
      expect(b.settings).toEqual(a.settings);
      expect(b.wallTime).toBe(a.wallTime);
      expect(
        b.channels.map((c) => [c.segmentsUsed, c.segmentsTotal, c.equivalentAverages, c.lastSegmentSample]),
      ).toEqual(a.channels.map((c) => [c.segmentsUsed, c.segmentsTotal, c.equivalentAverages, c.lastSegmentSample]));
      for (let c = 0; c < a.channels.length; c++)
        expect(Array.from(b.channels[c].psd)).toEqual(Array.from(a.channels[c].psd));
      expect(b.coherence?.length ?? 0).toBe(3); // every pair of three channels (the default 'auto')
      expect(b.averaging).toEqual(a.averaging);
      expect([b.nenbw, b.enbwHz, b.binHz]).toEqual([a.nenbw, a.enbwHz, a.binHz]);
      expect(Array.from(b.frequencies)).toEqual(Array.from(a.frequencies));
      for (let k = 0; k < a.coherence!.length; k++) {
        const pa = a.coherence![k];
        const pb = b.coherence![k];
        expect([pb.a, pb.b, pb.segmentsUsed]).toEqual([pa.a, pa.b, pa.segmentsUsed]);
        expect(Array.from(pb.csdRe)).toEqual(Array.from(pa.csdRe));
        expect(Array.from(pb.csdIm)).toEqual(Array.from(pa.csdIm));
        expect(Array.from(pb.coherence)).toEqual(Array.from(pa.coherence));
      }
    }
  });

  it('gives the density scipy.signal.welch gives, with mean averaging over one stretch', async () => {
    // Reference: scipy.signal.welch(x, fs, 'hann', nperseg=1024, noverlap=512, detrend='constant') of
    // float32(raw · scale) up to the snapshot's sample, as the one-thread pipeline test checks.
    const p = new Pipeline({
      analysis: { segment: 1024, window: 'hann', overlap: 0.5, detrend: 'mean' },
      averaging: { mode: 'mean' },
      threads: 2,
    });
    const snaps: SpectrumSnapshot[] = [];
    p.on('snapshot', (s) => snaps.push(s));
    p.info(streamInfo());
    expect(p.analysisOnWorker).toBe(true);
    const raw = rawCounts(100_000, 3);
    for (let i = 0; i < 100_000; i += 30_000)
      p.block({ firstSample: i, frames: Math.min(30_000, 100_000 - i), data: raw.map((d) => d.slice(i, i + 30_000)) });
    p.end();
    const last = snaps[snaps.length - 1];
    const [ref] = await scipyWelch(py, {
      channels: raw,
      fs: RATE,
      nperseg: 1024,
      noverlap: 512,
      window: 'hann',
      detrend: 'constant',
      cases: [[[0, last.sample + 1]]],
      scale: SCALE,
      fround: true,
    });
    expect(last.channels[0].segmentsUsed).toBe(ref.segments);
    for (let c = 0; c < 3; c++) expect(maxRelativeError(last.channels[c].psd, ref.psd[c])).toBeLessThan(1e-9);
  });
});
