// Log-frequency density cost: the offline estimate of a 10-minute record at 10 kS/s (default grid: 200 points,
// 100 averages, Hann, 50 %) against a numpy implementation of the same plan timed in the same run (vectorised
// per point: a matrix of segments times the kernel vector), with the agreement between the two; and the live
// form's CPU share at 4 channels × 10 kS/s in 1000-sample blocks. Run: npm run bench -- logfreq
import { spawnSync } from 'node:child_process';
import { mkdirSync, readFileSync, writeFileSync } from 'node:fs';
import { SeededRandom } from '../../dsp/random.ts';
import { planLogFrequencies } from '../../dsp/logfreq/plan.ts';
import { logFrequencyPsd } from '../../dsp/logfreq/log-frequency-psd.ts';
import { LiveLogFrequency } from '../../dsp/logfreq/live-log-frequency.ts';

const FS = 10_000;
const SAMPLES = 10 * 60 * FS;
const ROUNDS = 3;
const LIVE_SECONDS = 120;
const CHANNELS = 4;
const BLOCK = 1000;

function median(v: number[]): number {
  const s = [...v].sort((a, b) => a - b);
  return s[s.length >> 1];
}

const x = new SeededRandom(7).fillGaussian(new Float64Array(SAMPLES), 1e-6);
const plan = planLogFrequencies({ sampleRate: FS, samples: SAMPLES });
let segs = 0;
let work = 0;
for (let j = 0; j < plan.count; j++) {
  segs += plan.averages[j];
  work += plan.averages[j] * plan.segment[j];
}

// bench.mjs runs every benchmark with the repository as its working directory.
const tmp = `${process.cwd()}/.bench-tmp/`;
mkdirSync(tmp, { recursive: true });
writeFileSync(`${tmp}logfreq-x.bin`, new Uint8Array(x.buffer));
writeFileSync(
  `${tmp}logfreq-plan.json`,
  JSON.stringify({ f: [...plan.frequency], L: [...plan.segment], D: [...plan.step], K: [...plan.averages] }),
);
const py = `
import sys, time, json, numpy as np
from numpy.lib.stride_tricks import sliding_window_view
from scipy.signal import get_window
x = np.fromfile(sys.argv[1], dtype='<f8'); plan = json.load(open(sys.argv[2])); fs = ${FS}
def lpsd():
    out = []
    for f, L, D, K in zip(plan['f'], plan['L'], plan['D'], plan['K']):
        L = int(L); D = int(D); K = int(K)
        w = get_window('hann', L); n = np.arange(L)
        kern = w * np.exp(-2j * np.pi * f * n / fs)
        seg = sliding_window_view(x[:(K - 1) * D + L], L)[::D]
        X = seg @ kern - seg.mean(axis=1) * kern.sum()
        out.append(2 * np.mean(np.abs(X) ** 2) / (fs * np.sum(w * w)))
    return np.array(out)
times = []; cpu = []
for r in range(${ROUNDS}):
    t0 = time.perf_counter(); c0 = time.process_time(); p = lpsd()
    times.append(time.perf_counter() - t0); cpu.append(time.process_time() - c0)
p.astype('<f8').tofile(sys.argv[3])
print(json.dumps([times, cpu]))
`;

// The machine is shared: wall time suffers from other load, so CPU time of this process is reported beside it.
const cpuSeconds = (c: NodeJS.CpuUsage): number => (c.user + c.system) / 1e6;
const ours: number[] = [];
const oursCpu: number[] = [];
let psd = new Float64Array(0);
for (let r = 0; r < ROUNDS; r++) {
  const c0 = process.cpuUsage();
  const t0 = process.hrtime.bigint();
  psd = logFrequencyPsd(x, plan).psd;
  ours.push(Number(process.hrtime.bigint() - t0) / 1e9);
  oursCpu.push(cpuSeconds(process.cpuUsage(c0)));
}
const r = spawnSync(
  'python3',
  ['-c', py, `${tmp}logfreq-x.bin`, `${tmp}logfreq-plan.json`, `${tmp}logfreq-numpy.bin`],
  { encoding: 'utf8' },
);
if (r.status !== 0) throw new Error(`python3 failed: ${r.stderr}`);
const [theirs, theirsCpu]: number[][] = JSON.parse(r.stdout.trim().split('\n').pop() ?? '[[],[]]');
const refBytes = readFileSync(`${tmp}logfreq-numpy.bin`);
const ref = new Float64Array(refBytes.buffer.slice(refBytes.byteOffset, refBytes.byteOffset + refBytes.byteLength));
let worst = 0;
for (let j = 0; j < psd.length; j++) worst = Math.max(worst, Math.abs(psd[j] - ref[j]) / ref[j]);

console.log(
  `offline: ${SAMPLES} samples (10 min at ${FS} S/s), ${plan.count} points, ${segs} segments, ${(work / 1e9).toFixed(2)} G sample-visits`,
);
const list = (v: number[]): string => v.map((t) => t.toFixed(2)).join(', ');
console.log(
  `  floorline logFrequencyPsd  wall median ${median(ours).toFixed(2)} s (${list(ours)}), CPU median ${median(oursCpu).toFixed(2)} s (${list(oursCpu)}), ${(work / median(oursCpu) / 1e6).toFixed(0)} M visits per CPU second`,
);
console.log(
  `  numpy, same plan           wall median ${median(theirs).toFixed(2)} s (${list(theirs)}), CPU median ${median(theirsCpu).toFixed(2)} s (${list(theirsCpu)})`,
);
console.log(`  max relative difference    ${worst.toExponential(2)}`);

// Live: 4 independent channels, 1000-sample blocks, default live grid; CPU share of one core = busy / sample time.
const lives = Array.from({ length: CHANNELS }, () => new LiveLogFrequency({ sampleRate: FS }));
const liveRuns: number[] = [];
const rng = new SeededRandom(9);
const blocks = Array.from({ length: 16 }, () => rng.fillGaussian(new Float64Array(BLOCK), 1e-6)); // made outside the timing
for (let run = 0; run < ROUNDS; run++) {
  const c0 = process.cpuUsage();
  for (let b = 0; b < (LIVE_SECONDS * FS) / BLOCK; b++) {
    for (let c = 0; c < CHANNELS; c++) lives[c].push(blocks[(b + c) % blocks.length]);
  }
  liveRuns.push((cpuSeconds(process.cpuUsage(c0)) / LIVE_SECONDS) * 100);
}
const l0 = lives[0];
const snapshot = new Float64Array(l0.count);
const s0 = process.cpuUsage();
for (let i = 0; i < 1000; i++) l0.psd(snapshot);
const snapUs = (cpuSeconds(process.cpuUsage(s0)) * 1e6) / 1000;
console.log(
  `live: ${CHANNELS} ch × ${FS} S/s, ${BLOCK}-sample blocks, ${l0.count} points on ${l0.stages} stages, span 100 s`,
);
console.log(
  `  CPU time / sample time, one core: median ${median(liveRuns).toFixed(2)} %  (${liveRuns.map((v) => v.toFixed(2)).join(', ')})`,
);
console.log(`  psd() snapshot: ${snapUs.toFixed(1)} µs CPU per channel`);

// The agent's whole live view (agent/lowfreq/live-low-frequency.ts) at the same load: the estimators above plus
// the 0.1–10 Hz meters, 2 frames per second of sample time (ASD, band, averages, JSON-ready arrays) and a 1/f fit
// every 4th frame, span 60 s; beside it in this run, the bare estimator figure above.
const { LiveLowFrequency } = await import('../../agent/lowfreq/live-low-frequency.ts');
const viewRuns: number[] = [];
let updates = 0;
for (let run = 0; run < ROUNDS; run++) {
  const view = new LiveLowFrequency();
  view.start(
    FS,
    Array.from({ length: CHANNELS }, (_, c) => ({ name: `ch${c}`, unit: 'V' })),
  );
  view.onUpdate(() => updates++);
  const data = Array.from({ length: CHANNELS }, () => new Float64Array(BLOCK));
  const c0 = process.cpuUsage();
  for (let b = 0; b < (LIVE_SECONDS * FS) / BLOCK; b++) {
    for (let c = 0; c < CHANNELS; c++) data[c] = blocks[(b + c) % blocks.length];
    view.block(b * BLOCK, BLOCK, data);
  }
  viewRuns.push((cpuSeconds(process.cpuUsage(c0)) / LIVE_SECONDS) * 100);
}
console.log(
  `live view (agent): ${CHANNELS} ch × ${FS} S/s, estimator + 0.1–10 Hz meter + 2 frames/s + a fit every 2 s, ${updates / ROUNDS} updates per run`,
);
console.log(
  `  CPU time / sample time, one core: median ${median(viewRuns).toFixed(2)} %  (${viewRuns.map((v) => v.toFixed(2)).join(', ')}); bare estimator above: ${median(liveRuns).toFixed(2)} %`,
);
