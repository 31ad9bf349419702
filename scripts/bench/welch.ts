// Welch throughput: floorline's WelchEstimator against scipy.signal.welch on the same 2^24 samples
// (segment 4096, Hann, 50 % overlap, mean detrend), in one run, plus the streaming cost at 4 channels × 100 kS/s.
// Run: npm run bench -- welch
import { spawnSync } from 'node:child_process';
import { mkdirSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import FFT from 'fft.js';
import { SeededRandom } from '../../dsp/random.ts';
import { WelchEstimator } from '../../dsp/welch.ts';
import { makeWindow } from '../../dsp/windows.ts';
import { SpanWelch } from '../../agent/workers/span-welch.ts';

const SAMPLES = 1 << 24;
const SEGMENT = 4096;
const FS = 100_000;
const ROUNDS = 3;
const PER_ROUND = 3;

/** A run's elapsed wall time and the process's CPU time over it, in seconds. */
type Timing = [wall: number, cpu: number];

function timed(fn: () => void): Timing {
  const c0 = process.cpuUsage();
  const t0 = process.hrtime.bigint();
  fn();
  const wall = Number(process.hrtime.bigint() - t0) / 1e9;
  const c = process.cpuUsage(c0);
  return [wall, (c.user + c.system) / 1e6];
}

async function timedAsync(fn: () => Promise<void>): Promise<Timing> {
  const c0 = process.cpuUsage();
  const t0 = process.hrtime.bigint();
  await fn();
  const wall = Number(process.hrtime.bigint() - t0) / 1e9;
  const c = process.cpuUsage(c0);
  return [wall, (c.user + c.system) / 1e6];
}

function median(v: number[]): number {
  const s = [...v].sort((a, b) => a - b);
  return s[s.length >> 1];
}

const x = new SeededRandom(2024).fillGaussian(new Float64Array(SAMPLES));
const make = (): WelchEstimator =>
  new WelchEstimator({ sampleRate: FS, segment: SEGMENT, window: 'hann', overlap: 0.5, detrend: 'mean' });

// The machine is shared: alternate rounds of floorline and scipy so both see the same load; medians of all runs.
const tmp = new URL('../../.bench-tmp/', import.meta.url).pathname;
mkdirSync(tmp, { recursive: true });
const input = `${tmp}welch-input.bin`;
const output = `${tmp}welch-scipy.bin`;
writeFileSync(input, new Uint8Array(x.buffer));
// scipy: the same samples through a file; only the welch call is timed (one untimed warm-up call per process).
const py = `
import sys, time, json, numpy as np
from scipy.signal import welch, get_window
x = np.fromfile(sys.argv[1], dtype='<f8')
w = get_window('hann', ${SEGMENT})
times = []
for r in range(${PER_ROUND + 1}):
    t0, c0 = time.perf_counter(), time.process_time()
    f, p = welch(x, fs=${FS}, window=w, nperseg=${SEGMENT}, noverlap=${SEGMENT / 2}, detrend='constant')
    times.append((time.perf_counter() - t0, time.process_time() - c0))
p.astype('<f8').tofile(sys.argv[2])
print(json.dumps(times[1:]))
`;
// A plain fft.js Welch (copy, mean, window, realTransform, |X|² sum) as a second, load-independent yardstick:
// docs/TOOLCHAIN.md measured this at 1.05–1.2× scipy on an idle machine.
const plainFft = new FFT(SEGMENT);
const plainWin = makeWindow('hann', SEGMENT).values;
const plainSeg = new Float64Array(SEGMENT);
const plainOut = new Float64Array(2 * SEGMENT);
const plainSum = new Float64Array(SEGMENT / 2 + 1);
function plainWelch(): void {
  plainSum.fill(0);
  for (let s0 = 0; s0 + SEGMENT <= SAMPLES; s0 += SEGMENT / 2) {
    let mean = 0;
    for (let i = 0; i < SEGMENT; i++) mean += x[s0 + i];
    mean /= SEGMENT;
    for (let i = 0; i < SEGMENT; i++) plainSeg[i] = (x[s0 + i] - mean) * plainWin[i];
    plainFft.realTransform(plainOut, plainSeg);
    for (let k = 0; k <= SEGMENT / 2; k++) plainSum[k] += plainOut[2 * k] ** 2 + plainOut[2 * k + 1] ** 2;
  }
}

// The same samples in a SharedArrayBuffer for the span workers (read in place); workers started outside the timing.
const THREADS = Number(process.env.THREADS ?? 2);
const shared = new Float64Array(new SharedArrayBuffer(SAMPLES * 8));
shared.set(x);
const startT0 = performance.now();
const span = new SpanWelch(THREADS);
const welchOptions = { sampleRate: FS, segment: SEGMENT, window: 'hann', overlap: 0.5, detrend: 'mean' as const };
await span.psd(shared.subarray(0, SEGMENT * 4), welchOptions);
const startMs = performance.now() - startT0;
let spanPsd = new Float64Array(0);

const ours: Timing[] = [];
const spanned: Timing[] = [];
const plain: Timing[] = [];
const theirs: Timing[] = [];
let psd = new Float64Array(0);
for (let round = 0; round < ROUNDS; round++) {
  // floorline: the constructor (plan, window) is outside the timing, as scipy's window is; push + psd are timed.
  for (let r = 0; r < PER_ROUND + (round === 0 ? 1 : 0); r++) {
    const est = make();
    const t = timed(() => {
      est.push(x);
      psd = est.psd();
    });
    if (!(round === 0 && r === 0)) ours.push(t); // the very first run warms the JIT
  }
  for (let r = 0; r < PER_ROUND + (round === 0 ? 1 : 0); r++) {
    const t = await timedAsync(async () => {
      spanPsd = (await span.psd(shared, welchOptions)).psd;
    });
    if (!(round === 0 && r === 0)) spanned.push(t);
  }
  for (let r = 0; r < PER_ROUND + (round === 0 ? 1 : 0); r++) {
    const t = timed(plainWelch);
    if (!(round === 0 && r === 0)) plain.push(t);
  }
  const res = spawnSync('python3', ['-c', py, input, output], { encoding: 'utf8' });
  if (res.status !== 0) throw new Error(`python3 failed: ${res.stderr}`);
  theirs.push(...(JSON.parse(res.stdout) as Timing[]));
}
const raw = readFileSync(output);
const ref = new Float64Array(raw.buffer.slice(raw.byteOffset, raw.byteOffset + raw.byteLength));
let worst = 0;
let worstSpan = 0;
for (let k = 0; k < ref.length; k++) worst = Math.max(worst, Math.abs(psd[k] - ref[k]) / ref[k]);
for (let k = 0; k < ref.length; k++) worstSpan = Math.max(worstSpan, Math.abs(spanPsd[k] - ref[k]) / ref[k]);
await span.close();
rmSync(input);
rmSync(output);

const rate = (t: Timing[], which: 0 | 1): number => SAMPLES / median(t.map((v) => v[which]));
const fmt = (v: number): string => `${(v / 1e6).toFixed(1).padStart(6)} M samples/s`;
console.log(
  `2^24 samples, segment ${SEGMENT}, hann, 50 % overlap, mean detrend; medians of ${ROUNDS * PER_ROUND} runs each, alternating`,
);
console.log('                            wall clock              process CPU time');
for (const [name, t] of [
  ['floorline WelchEstimator', ours],
  [`floorline ${THREADS} span workers`, spanned],
  ['plain fft.js Welch      ', plain],
  ['scipy.signal.welch      ', theirs],
] as const) {
  console.log(`  ${name} : ${fmt(rate(t, 0))}     ${fmt(rate(t, 1))}`);
}
const ratio = (a: Timing[], b: Timing[], w: 0 | 1): string => (rate(a, w) / rate(b, w)).toFixed(2);
console.log(`  ratio floorline / scipy  : ${ratio(ours, theirs, 0)}×                  ${ratio(ours, theirs, 1)}×`);
console.log(`  ratio span workers / scipy: ${ratio(spanned, theirs, 0)}× wall (CPU time counts every thread)`);
console.log(`  ratio floorline / plain  : ${ratio(ours, plain, 0)}×                  ${ratio(ours, plain, 1)}×`);
console.log(
  `  max relative difference from scipy: ${worst.toExponential(1)} (one thread), ${worstSpan.toExponential(1)} (span workers)`,
);
console.log(`  span workers: ${THREADS} started and warmed in ${startMs.toFixed(0)} ms (outside the timing)`);

// Streaming: 4 channels at 100 kS/s in 1000-sample blocks, 20 s of sample time, default settings.
const CHANNELS = 4;
const BLOCK = 1000;
const SECONDS = 20;
const ests = Array.from({ length: CHANNELS }, make);
const block = new Float64Array(BLOCK);
const costs: number[] = [];
for (let rep = 0; rep < 5; rep++) {
  const c0 = process.cpuUsage();
  for (let b = 0; b < (SECONDS * FS) / BLOCK; b++) {
    const off = (b * BLOCK) % (SAMPLES - BLOCK);
    for (let c = 0; c < CHANNELS; c++) {
      block.set(x.subarray(off + c, off + c + BLOCK));
      if (ests[c].push(block) > 0) ests[c].psd(psd);
    }
  }
  const c = process.cpuUsage(c0);
  costs.push((c.user + c.system) / 1e6);
}
console.log(
  `  streaming 4 ch × 100 kS/s (1000-sample blocks, psd read per segment): CPU ${((100 * median(costs)) / SECONDS).toFixed(2)} % of one core`,
);
