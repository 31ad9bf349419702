// WAV throughput side by side with scipy on the same file, in one run: writing (WavWriter vs
// scipy.io.wavfile.write), reading (WavReader vs scipy.io.wavfile.read) and the whole offline report (analyzeFile
// vs scipy.io.wavfile.read + scipy.signal.welch on every channel). 4 channels × 2^22 frames of float32 (64 MiB).
// Run: npm run bench -- wav
import { spawnSync } from 'node:child_process';
import { mkdirSync, rmSync } from 'node:fs';
import { SeededRandom } from '../../dsp/random.ts';
import { analyzeFile } from '../../agent/analysis/report.ts';
import { WavReader } from '../../agent/wav/reader.ts';
import { WavWriter } from '../../agent/wav/writer.ts';

const FRAMES = 1 << 22;
const CHANNELS = 4;
const RATE = 100_000;
const BLOCK = 1000; // frames per append, as a recorder receives them
const ROUNDS = 3;

function median(v: number[]): number {
  const s = [...v].sort((a, b) => a - b);
  return s[s.length >> 1];
}

const tmp = new URL('../../.bench-tmp/', import.meta.url).pathname;
mkdirSync(tmp, { recursive: true });
const ours = `${tmp}wav-ours.wav`;
const theirs = `${tmp}wav-scipy.wav`;
const rng = new SeededRandom(99);
const data = Array.from({ length: CHANNELS }, () => rng.fillGaussian(new Float64Array(FRAMES), 1e-6));

function writeOurs(): number {
  const t0 = process.hrtime.bigint();
  const w = new WavWriter(
    ours,
    { sampleRate: RATE, channels: data.map((_, c) => ({ name: `ch${c}`, unit: 'V' })), firstSample: 0 },
    { durable: true },
  );
  for (let at = 0, n = 0; at < FRAMES; at += BLOCK, n++) {
    w.append(data, Math.min(BLOCK, FRAMES - at), at);
    if (n % 100 === 99) w.flush(); // once per 100 blocks = once per second of sample time at 100 kS/s
  }
  w.close();
  return Number(process.hrtime.bigint() - t0) / 1e9;
}

async function readOurs(): Promise<number> {
  const t0 = process.hrtime.bigint();
  const r = await WavReader.open(ours);
  let sum = 0;
  for (let b = await r.read(); b; b = await r.read()) sum += b.data[0][0];
  await r.close();
  if (!Number.isFinite(sum)) throw new Error('bad read');
  return Number(process.hrtime.bigint() - t0) / 1e9;
}

async function analyzeOurs(): Promise<number> {
  const t0 = process.hrtime.bigint();
  await analyzeFile(ours, {
    window: 'hann',
    overlap: 0.5,
    detrend: 'mean',
    bands: [{ low: 20, high: 20000 }],
    segment: 4096,
  });
  return Number(process.hrtime.bigint() - t0) / 1e9;
}

// scipy: write our samples (as float32) with wavfile.write, read them back, and read + welch; best-effort same work.
const py = `
import sys, time, json, numpy as np
from scipy.io import wavfile
from scipy.signal import welch
src, dst = sys.argv[1], sys.argv[2]
_, x = wavfile.read(src)
t = {}
t0 = time.perf_counter(); wavfile.write(dst, ${RATE}, x); t["write"] = time.perf_counter() - t0
t0 = time.perf_counter(); _, y = wavfile.read(dst); y = y.astype(np.float64); t["read"] = time.perf_counter() - t0
t0 = time.perf_counter(); _, y = wavfile.read(dst); f, p = welch(y.astype(np.float64), fs=${RATE}, window="hann", nperseg=4096, noverlap=2048, detrend="constant", axis=0); t["analyze"] = time.perf_counter() - t0
print(json.dumps(t))
`;

const o = { write: [] as number[], read: [] as number[], analyze: [] as number[] };
const s = { write: [] as number[], read: [] as number[], analyze: [] as number[] };
writeOurs(); // warm-up
await readOurs();
await analyzeOurs();
for (let round = 0; round < ROUNDS; round++) {
  o.write.push(writeOurs());
  o.read.push(await readOurs());
  o.analyze.push(await analyzeOurs());
  const res = spawnSync('python3', ['-c', py, ours, theirs], { encoding: 'utf8' });
  if (res.status !== 0) throw new Error(`python3 failed: ${res.stderr}`);
  const t = JSON.parse(res.stdout);
  s.write.push(t.write);
  s.read.push(t.read);
  s.analyze.push(t.analyze);
}
rmSync(ours);
rmSync(`${ours}.json`);
rmSync(theirs);

const mb = (FRAMES * CHANNELS * 4) / 2 ** 20;
const row = (label: string, a: number[], b: number[]): string =>
  `  ${label.padEnd(9)} floorline ${(mb / median(a)).toFixed(0).padStart(5)} MiB/s   scipy ${(mb / median(b)).toFixed(0).padStart(5)} MiB/s   ` +
  `(${(FRAMES / median(a) / 1e6).toFixed(1)} vs ${(FRAMES / median(b) / 1e6).toFixed(1)} M frames/s)`;
console.log(`${CHANNELS} ch × 2^22 frames float32 (${mb} MiB); medians of ${ROUNDS} alternating rounds`);
console.log(row('write', o.write, s.write) + '  [ours: 1000-frame appends, flush+fdatasync every 100 blocks]');
console.log(
  row('read', o.read, s.read) +
    '  [ours: 64 Ki-frame blocks to Float64Array per channel; scipy: whole file + astype(float64)]',
);
console.log(row('analyze', o.analyze, s.analyze) + '  [read + Welch 4096/hann/50 %/mean on every channel]');
