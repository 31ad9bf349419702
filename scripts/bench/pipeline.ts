// Pipeline benchmarks (run: npm run bench -- pipeline):
//  1. the demo recording through replay at --speed max: whole pipeline (conditioning, Welch, snapshots) with the
//     demo's detectors and baseline; samples/s and × real time. Reference in the same run: scipy.signal.welch of
//     the same file (read by scipy.io.wavfile, one mean over all segments: the bare spectral work).
//  2. throughput on synthetic blocks, 4 channels, segment 4096, 10 snapshots/s: aggregate samples/s on one core
//     (target ≥ 10 MS/s), against scipy.signal.welch on the same samples.
//  3. CPU % of one core in real time: the demo (8 kS/s × 2) and a paced 1 MS/s source (2 ch × 500 kS/s, bounded
//     queue), each for 15 s of wall time (target at 1 MS/s: < 25 %).
//  4. memory at 1 MS/s (1 channel, speed max, detectors on): resident memory after gc at 1, 5, 10 and 15 minutes
//     of sample time, growth 1 → 10 min (target < 10 %) and 5 → 15 min, and the live heap at the same points.
import { spawnSync } from 'node:child_process';
import { mkdirSync, writeFileSync } from 'node:fs';
import { Pipeline } from '../../agent/pipeline/pipeline.ts';
import { ReplaySource } from '../../agent/sources/replay.ts';
import { AlarmHook } from '../../agent/rules/alarm-hook.ts';
import { readBaseline } from '../../agent/baseline/format.ts';
import type { StreamInfo } from '../../protocol/stream.ts';
import { SeededRandom } from '../../dsp/random.ts';

declare const gc: (() => void) | undefined;
const root = `${process.cwd()}/`; // npm run bench runs from the repository root
const demo = `${root}recordings/demo.wav`;
const median = (v: number[]): number => [...v].sort((a, b) => a - b)[v.length >> 1];
const fmt = (x: number): string => (x >= 1e6 ? `${(x / 1e6).toFixed(2)} M` : `${(x / 1e3).toFixed(1)} k`);

function scipyWelchSeconds(code: string, args: string[]): number[] {
  const r = spawnSync('python3', ['-c', code, ...args], { encoding: 'utf8' });
  if (r.status !== 0) throw new Error(r.stderr);
  return JSON.parse(r.stdout);
}

// ---- 1. demo replay at max speed ----
async function demoReplay(detectors: boolean): Promise<{ seconds: number; samples: number; frames: number }> {
  const baseline = await readBaseline(`${root}recordings/demo-baseline.json`);
  const p = new Pipeline({ mode: 'lossless' });
  if (detectors) p.addDetector(new AlarmHook({ baseline }));
  const src = new ReplaySource(demo, { speed: 'max' });
  const t0 = performance.now();
  await p.attach(src);
  await src.done;
  const seconds = (performance.now() - t0) / 1000;
  const c = p.counters();
  return { seconds, samples: c.samples * p.stream!.channels.length, frames: c.samples };
}

const demoRuns: number[] = [];
const bareRuns: number[] = [];
let demoFrames = 0;
let demoSamples = 0;
for (let i = 0; i < 3; i++) {
  const r = await demoReplay(true);
  demoRuns.push(r.seconds);
  bareRuns.push((await demoReplay(false)).seconds);
  demoFrames = r.frames;
  demoSamples = r.samples;
}
const demoSec = median(demoRuns);
const bareSec = median(bareRuns);
const scipyDemo = median(
  scipyWelchSeconds(
    `import sys, time, json, numpy as np
from scipy.io import wavfile
from scipy.signal import welch
ts = []
for r in range(3):
    t0 = time.perf_counter()
    fs, x = wavfile.read(sys.argv[1]); x = x.astype(np.float64)
    f, p = welch(x, fs=fs, nperseg=4096, noverlap=2048, detrend='constant', axis=0)
    ts.append(time.perf_counter() - t0)
print(json.dumps(ts))`,
    [demo],
  ),
);
const demoDuration = demoFrames / 8000;
console.log('1. demo recording, replay --speed max (pipeline + detectors + baseline), median of 3');
console.log(
  `   floorline: ${demoSec.toFixed(3)} s for ${demoDuration} s of sample time = ${fmt(demoSamples / demoSec)}samples/s aggregate, ${(demoDuration / demoSec).toFixed(0)}× real time`,
);
console.log(
  `   without detectors: ${bareSec.toFixed(3)} s = ${fmt(demoSamples / bareSec)}samples/s, ${(demoDuration / bareSec).toFixed(0)}× real time`,
);
console.log(
  `   scipy read + welch of the same file: ${scipyDemo.toFixed(3)} s = ${fmt(demoSamples / scipyDemo)}samples/s`,
);

// ---- 2. synthetic throughput ----
const CH = 4;
const BLOCK = 65536;
const POOL = 8;
const rng = new SeededRandom(99);
const pool = Array.from({ length: POOL }, () =>
  Array.from({ length: CH }, () => rng.fillGaussian(new Float64Array(BLOCK), 1000)),
);
function info(rate: number, channels: number): StreamInfo {
  return {
    sampleRate: rate,
    channels: Array.from({ length: channels }, (_, c) => ({
      name: `ch${c}`,
      unit: 'V',
      scale: 1e-7,
      fullScaleCounts: 8388607,
    })),
    source: { kind: 'simulator', label: 'bench' },
    firstSample: 0,
    startWallTime: '2026-01-01T00:00:00.000Z',
  };
}
function throughput(blocks: number): number {
  const p = new Pipeline({ mode: 'lossless' });
  p.info(info(2_500_000, CH));
  let snaps = 0;
  p.on('snapshot', () => snaps++);
  const t0 = performance.now();
  for (let b = 0; b < blocks; b++) p.block({ firstSample: b * BLOCK, frames: BLOCK, data: pool[b % POOL] });
  const s = (performance.now() - t0) / 1000;
  if (snaps === 0) throw new Error('no snapshots');
  return (blocks * BLOCK * CH) / s;
}
throughput(16); // warm-up
const tp = median([throughput(160), throughput(160), throughput(160)]);
const tmp = `${root}.bench-tmp/`;
mkdirSync(tmp, { recursive: true });
const flat = new Float64Array(POOL * BLOCK);
for (let b = 0; b < POOL; b++) flat.set(pool[b][0], b * BLOCK);
writeFileSync(`${tmp}pipeline-x.bin`, new Uint8Array(flat.buffer));
const scipyTp = median(
  scipyWelchSeconds(
    `import sys, time, json, numpy as np
from scipy.signal import welch
x = np.fromfile(sys.argv[1], dtype='<f8') * 1e-7
ts = []
for r in range(4):
    t0 = time.perf_counter()
    f, p = welch(x, fs=2.5e6, nperseg=4096, noverlap=2048, detrend='constant')
    ts.append(len(x) / (time.perf_counter() - t0))
print(json.dumps(ts[1:]))`,
    [`${tmp}pipeline-x.bin`],
  ),
);
console.log(
  `2. synthetic, ${CH} ch × 65536-frame blocks, segment 4096, Hann, 50 %, mean detrend, exp averaging, 10 snapshots/s`,
);
console.log(
  `   floorline pipeline: ${fmt(tp)}samples/s aggregate (target ≥ 10 M)   scipy.signal.welch alone: ${fmt(scipyTp)}samples/s`,
);

// ---- 3. CPU in real time ----
async function cpuDuring(seconds: number, run: (stop: Promise<void>) => Promise<void>): Promise<number> {
  let release!: () => void;
  const stop = new Promise<void>((r) => (release = r));
  const u0 = process.cpuUsage();
  const t0 = performance.now();
  const job = run(stop);
  await new Promise((r) => setTimeout(r, seconds * 1000));
  release();
  await job;
  const u = process.cpuUsage(u0);
  return ((u.user + u.system) / 1000 / (performance.now() - t0)) * 100;
}
const WALL = 15;
const demoCpu = await cpuDuring(WALL, async (stop) => {
  const baseline = await readBaseline(`${root}recordings/demo-baseline.json`);
  const p = new Pipeline({ mode: 'lossless' });
  p.addDetector(new AlarmHook({ baseline }));
  const src = new ReplaySource(demo, { speed: 1, loop: true });
  await p.attach(src);
  await stop;
  await src.stop();
});
const paced = await cpuDuring(WALL, async (stop) => {
  const rate = 500_000;
  const p = new Pipeline({ mode: 'bounded' });
  p.addDetector(new AlarmHook({}));
  p.info(info(rate, 2));
  const frames = rate / 50; // 20 ms blocks, paced to the wall clock as a board would deliver them
  const data = [pool[0][0].subarray(0, frames), pool[1][1].subarray(0, frames)];
  let next = 0;
  const t0 = performance.now();
  let stopped = false;
  void stop.then(() => (stopped = true));
  while (!stopped) {
    p.block({ firstSample: next, frames, data });
    next += frames;
    const due = t0 + (next / rate) * 1000;
    await new Promise((r) => setTimeout(r, Math.max(0, due - performance.now())));
  }
  p.end();
  if (p.counters().droppedBlocks) console.log(`   (paced 1 MS/s dropped ${p.counters().droppedBlocks} blocks)`);
});
console.log(`3. CPU in real time (process.cpuUsage over ${WALL} s wall)`);
console.log(`   demo (2 ch × 8 kS/s, replay speed 1, detectors): ${demoCpu.toFixed(1)} % of one core`);
console.log(
  `   paced 1 MS/s (2 ch × 500 kS/s, bounded queue, detectors): ${paced.toFixed(1)} % of one core (target < 25 %)`,
);

// ---- 4. memory over 10 minutes of sample time at 1 MS/s ----
// Resident memory is read after gc at 1, 5, 10 and 15 minutes of sample time: growth 1 → 10 min (the target), and
// over the 10 minutes after a 5-minute warm-up, so a one-off warm-up (pages of a buffer touched for the first
// time, allocator free lists settling) is told from steady growth. The live heap (heapUsed + ArrayBuffers) is
// printed beside RSS as the leak check: it grows only if something keeps references.
{
  const rate = 1_000_000;
  const p = new Pipeline({ mode: 'lossless' });
  p.addDetector(new AlarmHook({}));
  p.info(info(rate, 1));
  const sample = (): { rss: number; live: number } => {
    gc?.();
    gc?.();
    const u = process.memoryUsage();
    return { rss: u.rss, live: u.heapUsed + u.arrayBuffers };
  };
  let next = 0;
  const feedTo = (minutes: number): void => {
    const until = minutes * 60 * rate;
    for (let b = 0; next < until; b++) {
      p.block({ firstSample: next, frames: BLOCK, data: [pool[b % POOL][b % CH]] });
      next += BLOCK;
    }
  };
  const t0 = performance.now();
  const at = [1, 5, 10, 15].map((minutes) => {
    feedTo(minutes);
    return sample();
  });
  const s = (performance.now() - t0) / 1000;
  const mib = (x: number): string => (x / 2 ** 20).toFixed(1);
  const pct = (a: number, b: number): string => `${(((b - a) / a) * 100).toFixed(1)} %`;
  console.log(
    `4. memory at 1 MS/s, speed max, 1 ch, detectors on (${(next / rate).toFixed(0)} s of sample time in ${s.toFixed(1)} s)`,
  );
  console.log(`   RSS after 1 / 5 / 10 / 15 min: ${at.map((x) => mib(x.rss)).join(' / ')} MiB`);
  console.log(
    `   growth 1 → 10 min: ${pct(at[0].rss, at[2].rss)} (target < 10 %); after a 5-min warm-up, 5 → 15 min: ${pct(at[1].rss, at[3].rss)}`,
  );
  console.log(
    `   live heap + ArrayBuffers after gc: ${at.map((x) => mib(x.live)).join(' / ')} MiB (1 → 10 min ${pct(at[0].live, at[2].live)})`,
  );
}
