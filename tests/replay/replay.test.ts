// Replays through the real CLI and through ReplaySource, checked against scipy on files scipy wrote.
import { spawnSync } from 'node:child_process';
import { readFileSync } from 'node:fs';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { Pipeline } from '../../agent/pipeline/pipeline.ts';
import type { SpectrumSnapshot } from '../../agent/pipeline/types.ts';
import type { GapNotice, SampleBlock, SourceSink, StreamInfo } from '../../protocol/stream.ts';
import { ReplaySource } from '../../agent/sources/replay.ts';
import { Python, root, tempDir } from '../wav/support.ts';

const RATE = 4000;
const FRAMES = 8 * RATE;
let dir: string;
let py: Python;
let floatWav: string;
let int16Wav: string;

function floorline(...args: string[]) {
  return spawnSync(process.execPath, [join(root, 'bin/floorline.mjs'), ...args], {
    encoding: 'utf8',
    cwd: dir,
    timeout: 60_000,
  });
}

beforeAll(async () => {
  dir = tempDir('replay');
  py = new Python();
  floatWav = join(dir, 'float.wav');
  int16Wav = join(dir, 'int16.wav');
  // Seeded white noise (1 mV rms) plus a 250 Hz line on ch1, written by scipy.io.wavfile as float32 and int16.
  await py.run(
    `rng = np.random.default_rng(42)
n, fs = args[0], args[1]
t = np.arange(n) / fs
x = np.stack([1e-3 * rng.standard_normal(n), 2e-4 * rng.standard_normal(n) + 1e-2 * np.sin(2 * np.pi * 250 * t)], axis=1)
wavfile.write(args[2], fs, x.astype(np.float32))
q = np.clip(np.round(x / 0.02 * 32767), -32768, 32767).astype(np.int16)
q[1000, 0] = 32767
q[1001, 0] = -32768
wavfile.write(args[3], fs, q)`,
    FRAMES,
    RATE,
    floatWav,
    int16Wav,
  );
});

afterAll(() => py.close());

function snapshotsOf(path: string): { sample: number; channels: { psd: number[]; segmentsUsed: number }[] }[] {
  return readFileSync(path, 'utf8')
    .trim()
    .split('\n')
    .map((l) => JSON.parse(l));
}

describe('floorline replay', () => {
  it('gives bit-identical snapshots on two runs and at two speeds, equal to scipy.signal.welch on the file', async () => {
    const common = ['--no-server', '--quiet', '--segment', '1024', '--average', 'mean', '--snapshot-rate', '4'];
    const a = floorline('replay', floatWav, '--speed', 'max', '--snapshots-out', 'a.jsonl', ...common);
    const b = floorline('replay', floatWav, '--speed', 'max', '--snapshots-out', 'b.jsonl', ...common);
    const c = floorline('replay', floatWav, '--speed', '40', '--snapshots-out', 'c.jsonl', ...common);
    for (const r of [a, b, c]) expect(r.status, r.stderr).toBe(0);
    const textA = readFileSync(join(dir, 'a.jsonl'), 'utf8');
    expect(textA.length).toBeGreaterThan(1000);
    // (compared as booleans: a failing diff of megabytes of JSON would say nothing)
    expect(readFileSync(join(dir, 'b.jsonl'), 'utf8') === textA).toBe(true);
    // Speed 40 reads 50 ms blocks, max reads 65536-frame blocks: the same sample instants and bytes.
    expect(readFileSync(join(dir, 'c.jsonl'), 'utf8') === textA).toBe(true);
    const digest = (out: string) => /digest ([0-9a-f]+)/.exec(out)?.[1];
    expect(digest(a.stdout)).toBeDefined();
    expect(digest(c.stdout)).toBe(digest(a.stdout));

    const snaps = snapshotsOf(join(dir, 'a.jsonl'));
    const last = snaps[snaps.length - 1];
    // Reference: scipy.io.wavfile.read, then scipy.signal.welch(x[:sample+1], fs, 'hann', 1024, 512, detrend='constant').
    const ref = await py.run<{ psd: number[][]; k: number }>(
      `fs, x = wavfile.read(args[0])
x = x.astype(np.float64)[: args[1] + 1]
psd = [signal.welch(x[:, c], fs=fs, window='hann', nperseg=1024, noverlap=512, detrend='constant')[1].tolist() for c in range(2)]
result = {"psd": psd, "k": (len(x) - 1024) // 512 + 1}`,
      floatWav,
      last.sample,
    );
    expect(last.channels[0].segmentsUsed).toBe(ref.k);
    for (let ch = 0; ch < 2; ch++) {
      const peak = Math.max(...ref.psd[ch]);
      ref.psd[ch].forEach((v, k) => {
        if (v > 1e-12 * peak) expect(Math.abs(last.channels[ch].psd[k] - v) / v).toBeLessThan(1e-9);
      });
    }
  });

  it('refuses a bad --speed, a start outside the file, an unknown window and a missing file with exit 2 and a message', () => {
    const speed = floorline('replay', floatWav, '--speed', 'fast', '--no-server');
    expect(speed.status).toBe(2);
    expect(speed.stderr).toMatch(/--speed 'fast'.*--speed max/);
    const start = floorline('replay', floatWav, '--start-time', '100', '--no-server');
    expect(start.status).toBe(2);
    expect(start.stderr).toMatch(/outside the recording.*pick a start inside it/);
    const win = floorline('replay', floatWav, '--window', 'gauss', '--no-server');
    expect(win.status).toBe(2);
    expect(win.stderr).toMatch(/--window: unknown window "gauss": choose one of rect, hann/);
    const missing = floorline('replay', join(dir, 'none.wav'), '--no-server');
    expect(missing.status).toBe(2);
    expect(missing.stderr).toMatch(/none\.wav/);
  });
});

/** A sink that records what a source delivers (copies: the reader reuses its arrays). */
function recordingSink() {
  const blocks: { firstSample: number; frames: number; data: Float64Array[] }[] = [];
  const gaps: GapNotice[] = [];
  let info: StreamInfo | undefined;
  let ended = false;
  const sink: SourceSink = {
    info: (i) => (info = i),
    block: (b: SampleBlock) =>
      blocks.push({ firstSample: b.firstSample, frames: b.frames, data: b.data.map((d) => d.slice(0, b.frames)) }),
    gap: (g) => gaps.push(g),
    link: () => undefined,
    end: () => (ended = true),
  };
  return { sink, blocks, gaps, info: () => info, ended: () => ended };
}

describe('ReplaySource', () => {
  it('delivers the samples scipy.io.wavfile reads, with continuous indices across a loop seam', async () => {
    const rec = recordingSink();
    const src = new ReplaySource(floatWav, { speed: 'max', loop: true, maxLoops: 2, blockFrames: 3000 });
    await src.start(rec.sink);
    await src.done;
    expect(rec.ended()).toBe(true);
    const total = rec.blocks.reduce((n, b) => n + b.frames, 0);
    expect(total).toBe(2 * FRAMES);
    let next = 0;
    for (const b of rec.blocks) {
      expect(b.firstSample).toBe(next);
      next += b.frames;
    }
    expect(rec.gaps).toEqual([{ sample: FRAMES, lost: 0, reason: expect.stringMatching(/loop/), restartsAt: 0 }]);
    // scipy.io.wavfile.read: samples 0..4 of ch1 and the first samples after the seam equal the file's first ones.
    const head = await py.run<number[]>(
      `fs, x = wavfile.read(args[0]); result = x[:5, 1].astype(float).tolist()`,
      floatWav,
    );
    const seamBlock = rec.blocks.find((b) => b.firstSample <= FRAMES && b.firstSample + b.frames > FRAMES)!;
    const off = FRAMES - seamBlock.firstSample;
    expect(Array.from(rec.blocks[0].data[1].subarray(0, 5))).toEqual(head);
    expect(Array.from(seamBlock.data[1].subarray(off, off + 5))).toEqual(head);
  });

  it('with loopWholeFile, starts at a later point once and then loops over the whole file (as the demo does)', async () => {
    const start = 20_000;
    const rec = recordingSink();
    const src = new ReplaySource(floatWav, {
      speed: 'max',
      loop: true,
      maxLoops: 3,
      blockFrames: 3000,
      startSample: start,
      loopWholeFile: true,
    });
    await src.start(rec.sink);
    await src.done;
    expect(rec.info()!.firstSample).toBe(start);
    // The first pass is the file's tail; each later one the whole file. Indices run on without a hole, so a
    // sample index modulo the file length is its place in the file from the second pass on.
    expect(rec.blocks.reduce((n, b) => n + b.frames, 0)).toBe(FRAMES - start + 2 * FRAMES);
    let next = start;
    for (const b of rec.blocks) {
      expect(b.firstSample).toBe(next);
      next += b.frames;
    }
    expect(rec.gaps.map((g) => [g.sample, g.restartsAt])).toEqual([
      [FRAMES, 0],
      [2 * FRAMES, 0],
    ]);
    // scipy.io.wavfile.read: the first samples of the first pass are x[start:], those after each seam x[0:].
    const ref = await py.run<{ tail: number[]; head: number[] }>(
      `fs, x = wavfile.read(args[0]); result = {"tail": x[args[1]:args[1] + 5, 0].astype(float).tolist(), "head": x[:5, 0].astype(float).tolist()}`,
      floatWav,
      start,
    );
    expect(Array.from(rec.blocks[0].data[0].subarray(0, 5))).toEqual(ref.tail);
    const seam = rec.blocks.find((b) => b.firstSample <= FRAMES && b.firstSample + b.frames > FRAMES)!;
    const off = FRAMES - seam.firstSample;
    expect(Array.from(seam.data[0].subarray(off, off + 5))).toEqual(ref.head);
  });

  it('analyses every loop of a looping replay exactly as the first (same spectra, shifted by the file length)', async () => {
    // Step 512 and snapshot interval 1333 do not divide the 32000-frame file: the grids restart with each loop.
    const p = new Pipeline({
      analysis: { segment: 1024, overlap: 0.5 },
      averaging: { mode: 'exponential', tauSeconds: 1 },
      snapshotRate: 3,
    });
    const snaps: SpectrumSnapshot[] = [];
    p.on('snapshot', (s) => snaps.push(s));
    const src = new ReplaySource(floatWav, { speed: 'max', loop: true, maxLoops: 2, blockFrames: 4321 });
    await p.attach(src);
    await src.done;
    const first = snaps.filter((s) => s.sample < FRAMES);
    const second = snaps.filter((s) => s.sample >= FRAMES);
    expect(first.length).toBeGreaterThan(10);
    expect(second.map((s) => s.sample - FRAMES)).toEqual(first.map((s) => s.sample));
    for (let i = 0; i < first.length; i++) {
      expect(second[i].channels[0].segmentsUsed).toBe(first[i].channels[0].segmentsUsed);
      for (let c = 0; c < 2; c++) expect(second[i].channels[c].psd).toEqual(first[i].channels[c].psd);
    }
    // And the first loop is scipy's (checked in the CLI test above for mean averaging); here: same count of
    // segments as scipy.signal.welch would use on x[:sample+1] (nperseg 1024, noverlap 512).
    const s0 = first[first.length - 1];
    expect(s0.channels[0].segmentsTotal).toBe(Math.floor((s0.sample + 1 - 1024) / 512) + 1);
  });

  it('starts at a sample index: the first analysed segment begins at the next step multiple', async () => {
    const start = 5003;
    const p = new Pipeline({ analysis: { segment: 1024, overlap: 0.5 }, averaging: { mode: 'mean' }, snapshotRate: 4 });
    const snaps: SpectrumSnapshot[] = [];
    p.on('snapshot', (s) => snaps.push(s));
    const src = new ReplaySource(floatWav, { speed: 'max', startSample: start });
    await p.attach(src);
    await src.done;
    expect(p.counters().samples).toBe(FRAMES - start);
    const last = snaps[snaps.length - 1];
    const aligned = Math.ceil(start / 512) * 512; // 5120: segments sit on multiples of the 512-sample step
    // scipy.signal.welch over x[5120 : sample + 1] of the file as scipy.io.wavfile reads it.
    const ref = await py.run<{ psd: number[]; k: number }>(
      `fs, x = wavfile.read(args[0])
y = x[args[1]: args[2] + 1, 0].astype(np.float64)
result = {"psd": signal.welch(y, fs=fs, window='hann', nperseg=1024, noverlap=512, detrend='constant')[1].tolist(), "k": (len(y) - 1024) // 512 + 1}`,
      floatWav,
      aligned,
      last.sample,
    );
    expect(last.channels[0].segmentsUsed).toBe(ref.k);
    const peak = Math.max(...ref.psd);
    ref.psd.forEach((v, k) => {
      if (v > 1e-12 * peak) expect(Math.abs(last.channels[0].psd[k] - v) / v).toBeLessThan(1e-9);
    });
  });

  it('reads int16 PCM with --scale as volts and flags samples at full scale as clipped', async () => {
    const p = new Pipeline({ analysis: { segment: 1024 }, snapshotRate: 4 });
    const clips: number[] = [];
    p.on('clip', (c) => clips.push(c.firstSample, c.lastSample, c.count));
    const src = new ReplaySource(int16Wav, { speed: 'max', scale: 1 });
    await p.attach(src);
    await src.done;
    const info = p.stream!;
    expect(info.channels[0].unit).toBe('V');
    // int16 full scale is 32768 counts = 1 V at --scale 1 (libsndfile-style normalisation, common practice);
    // numpy: np.sum(np.abs(q/32768) >= 0.999) over the file is the count of clipped samples.
    const expected = await py.run<number>(
      `fs, q = wavfile.read(args[0]); result = int(np.sum(np.abs(q[:, 0] / 32768.0) >= 0.999))`,
      int16Wav,
    );
    expect(p.counters().clippedSamples[0]).toBe(expected);
    expect(expected).toBeGreaterThanOrEqual(2);
    expect(clips.slice(0, 2)).toEqual([1000, expected === 2 ? 1001 : clips[1]]);
  });
});
