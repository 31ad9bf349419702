// Recorder: rotation and event captures, checked by reading the files back with scipy.io.wavfile.
import { copyFileSync, readFileSync } from 'node:fs';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { dataFolderAt, ensureDataFolder } from '../../agent/config/data-folder.ts';
import { Pipeline } from '../../agent/pipeline/pipeline.ts';
import { Recorder } from '../../agent/recorder/recorder.ts';
import { ReplaySource } from '../../agent/sources/replay.ts';
import { readWavFile } from '../../agent/wav/reader.ts';
import { Python, tempDir } from '../wav/support.ts';

const RATE = 4000;
const FRAMES = 10 * RATE;
let dir: string;
let py: Python;
let source: string;

beforeAll(async () => {
  dir = tempDir('recorder');
  py = new Python();
  source = join(dir, 'source.wav');
  await py.run(
    `rng = np.random.default_rng(3)
wavfile.write(args[0], args[1], (1e-3 * rng.standard_normal((args[2], 2))).astype(np.float32))`,
    source,
    RATE,
    FRAMES,
  );
});

afterAll(() => py.close());

async function replayWithRecorder(
  folderName: string,
  options: ConstructorParameters<typeof Recorder>[1],
  during?: (r: Recorder, p: Pipeline) => void,
) {
  const folder = ensureDataFolder(dataFolderAt(join(dir, folderName)));
  const pipeline = new Pipeline({ analysis: { segment: 1024 } });
  const recorder = new Recorder(folder, { durable: false, ...options });
  recorder.attach(pipeline);
  during?.(recorder, pipeline);
  const src = new ReplaySource(source, { speed: 'max', blockFrames: 1000 });
  await pipeline.attach(src);
  await src.done;
  recorder.close();
  return { folder, recorder, pipeline };
}

describe('Recorder', () => {
  it('rotates files with continuous sample indices; scipy reads them back as the original samples', async () => {
    const { folder, recorder } = await replayWithRecorder('rotation', { rotateSeconds: 3 }, (r) => r.startRecording());
    const status = recorder.status();
    expect(status.state).toBe('recording');
    expect(status.files).toHaveLength(4); // 10 s in 3 s files: 3 + 3 + 3 + 1
    expect(status.framesWritten).toBe(FRAMES);
    let next = 0;
    for (const f of status.files) {
      const meta = JSON.parse(readFileSync(join(folder.root, `${f}.json`), 'utf8'));
      expect(meta.firstSample).toBe(next);
      // Frame counts as scipy.io.wavfile reads the file
      const frames = await py.run<number>(
        `fs, x = wavfile.read(args[0]); result = int(x.shape[0])`,
        join(folder.root, f),
      );
      next += frames;
    }
    expect(next).toBe(FRAMES);
    // Concatenated, the files equal the source bit for bit (numpy.array_equal on scipy's float32 samples).
    const equal = await py.run<boolean>(
      `fs, src = wavfile.read(args[0])
parts = [wavfile.read(p)[1] for p in args[1]]
result = bool(np.array_equal(np.concatenate(parts), src)) and all(wavfile.read(p)[0] == fs for p in args[1])`,
      source,
      status.files.map((f) => join(folder.root, f)),
    );
    expect(equal).toBe(true);
  });

  it('captures pre- and post-trigger samples into their own file, as scipy reads the source there', async () => {
    const trigger = 6 * RATE + 123;
    let handle: ReturnType<Recorder['capture']> | undefined;
    let early: ReturnType<Recorder['capture']> | undefined;
    let joined: ReturnType<Recorder['capture']> | undefined;
    let other: ReturnType<Recorder['capture']> | undefined;
    const { folder } = await replayWithRecorder('capture', { preSeconds: 2, postSeconds: 1 }, (r, p) => {
      p.on('block', (b) => {
        // Ask when the stream passes the trigger, as an alarm would (its decision comes after the samples).
        if (!handle && b.firstSample + b.frames > trigger + 500) handle = r.capture(trigger, 'band-rise ch0');
        if (handle && !joined && b.firstSample > trigger + 1500) {
          joined = r.capture(trigger + 1500, 'band-rise ch0');
          other = r.capture(trigger + 1500, 'spur ch1');
        }
        if (!early && b.firstSample >= 1000) early = r.capture(500, 'early');
      });
    });
    const done = await handle!.done;
    expect(done.file).toBe(handle!.file);
    expect(handle!.firstSample).toBe(trigger - 2 * RATE);
    // A second alarm of the same label (incident and channel) inside the running capture extends it; another
    // label gets a file named after itself, though the spans overlap.
    expect(joined!.file).toBe(handle!.file);
    expect(other!.file).not.toBe(handle!.file);
    expect(other!.file).toMatch(/capture-spur_ch1-/);
    await other!.done;
    expect(done.frames).toBe(2 * RATE + 1500 + RATE + 1);
    const meta = JSON.parse(readFileSync(join(folder.root, `${handle!.file}.json`), 'utf8'));
    expect(meta.firstSample).toBe(trigger - 2 * RATE);
    const same = await py.run<boolean>(
      `fs, src = wavfile.read(args[0]); fs2, cap = wavfile.read(args[1])
result = bool(np.array_equal(cap, src[args[2]: args[2] + len(cap)])) and fs2 == fs`,
      source,
      join(folder.root, handle!.file),
      trigger - 2 * RATE,
    );
    expect(same).toBe(true);
    // Trigger 500 samples in: the pre-trigger span starts at the stream's first sample.
    const e = await early!.done;
    expect(early!.firstSample).toBe(0);
    expect(e.frames).toBe(500 + RATE + 1);
  });

  it('starts a new file after a gap, its sidecar carrying the first sample after the gap', async () => {
    const folder = ensureDataFolder(dataFolderAt(join(dir, 'gap')));
    const pipeline = new Pipeline({ analysis: { segment: 1024 } });
    const recorder = new Recorder(folder, { durable: false });
    recorder.attach(pipeline);
    recorder.startRecording();
    const { info, data } = await readWavFile(source);
    pipeline.info({
      sampleRate: RATE,
      channels: info.channels.map((c) => ({ name: c.name, unit: c.unit, scale: 1, fullScaleCounts: Infinity })),
      source: { kind: 'replay', label: 'gap test' },
      firstSample: 0,
      startWallTime: '2026-01-01T00:00:00.000Z',
    });
    const gapAt = 3 * RATE + 17;
    const lost = 1000;
    for (let i = 0; i < FRAMES; i += 500) {
      if (i <= gapAt && gapAt < i + 500) {
        pipeline.block({ firstSample: i, frames: gapAt - i, data: data.map((d) => d.slice(i, gapAt)) });
        pipeline.gap({ sample: gapAt, lost, reason: 'test' });
        const resume = gapAt + lost;
        i = resume - 500; // continue in 500-frame blocks from the sample after the gap
        continue;
      }
      const n = Math.min(500, FRAMES - i);
      pipeline.block({ firstSample: i, frames: n, data: data.map((d) => d.slice(i, i + n)) });
    }
    pipeline.end();
    recorder.close();
    const files = recorder.status().files;
    expect(files).toHaveLength(2);
    const firsts = files.map((f) => JSON.parse(readFileSync(join(folder.root, `${f}.json`), 'utf8')).firstSample);
    expect(firsts).toEqual([0, gapAt + lost]);
    // scipy.io.wavfile: file 1 = source[0:gapAt], file 2 = source[gapAt+lost:].
    const ok = await py.run<boolean>(
      `fs, src = wavfile.read(args[0]); a = wavfile.read(args[1])[1]; b = wavfile.read(args[2])[1]
result = bool(np.array_equal(a, src[:args[3]]) and np.array_equal(b, src[args[4]:]))`,
      source,
      join(folder.root, files[0]),
      join(folder.root, files[1]),
      gapAt,
      gapAt + lost,
    );
    expect(ok).toBe(true);
  });

  it('writes samples and header sizes out every 0.5 s of sample time, whether or not the flush timer runs', async () => {
    // The flush timer is set to an hour, as on a machine too loaded to run it: only the sample-time bound acts.
    // Copies of the file taken synchronously inside the pipeline's block events (the recorder's handler runs
    // first) are what a kill -9 at that instant would leave.
    const copies: { path: string; received: number }[] = [];
    const { recorder } = await replayWithRecorder('write-out', { flushMs: 3_600_000, rotateSeconds: 0 }, (r, p) => {
      r.startRecording();
      p.on('block', (b) => {
        const received = b.firstSample + b.frames;
        if (received % 7000 !== 0 || !r.status().file) return;
        const path = join(dir, `write-out-${received}.wav`);
        copyFileSync(join(dir, 'write-out', r.status().file!), path);
        copies.push({ path, received });
      });
    });
    expect(recorder.status().state).toBe('recording');
    expect(copies.length).toBeGreaterThanOrEqual(5);
    for (const c of copies) {
      // scipy.io.wavfile reads the header sizes as left at that instant: at most 0.5 s of samples behind.
      const frames = await py.run<number>(`fs, x = wavfile.read(args[0]); result = int(x.shape[0])`, c.path);
      expect(c.received - frames, `copy at sample ${c.received}`).toBeLessThanOrEqual(0.5 * RATE);
      expect(frames).toBeLessThanOrEqual(c.received);
    }
  });
});
