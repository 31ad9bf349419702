// Whole-process offline analysis against a scipy script doing the same work on the same file: `floorline analyze
// FILE --lines --cumulative --json` versus python3 reading the WAV (scipy.io.wavfile.read), scipy.signal.welch on
// every channel (Hann 4096, 50 %, detrend constant), numpy.cumsum for the cumulative RMS and json.dumps of the
// spectra. 4 channels × 2^22 frames of float32 (64 MiB). Wall time and peak resident memory of each process from
// /usr/bin/time; alternating rounds, medians. Run: npm run bench -- analyze-process
import { spawnSync } from 'node:child_process';
import { mkdirSync } from 'node:fs';
import { SeededRandom } from '../../dsp/random.ts';
import { WavWriter } from '../../agent/wav/writer.ts';

const FRAMES = 1 << 22;
const CHANNELS = 4;
const RATE = 100_000;
const ROUNDS = 5;

const root = `${process.cwd()}/`; // scripts/bench.mjs runs every bench from the repository root
const tmp = `${root}.bench-tmp/`;
mkdirSync(tmp, { recursive: true });
const file = `${tmp}analyze-4ch.wav`;

// Seeded noise with a few lines (so --lines has work), written as our float32 recording.
const rng = new SeededRandom(7);
const w = new WavWriter(
  file,
  {
    sampleRate: RATE,
    channels: Array.from({ length: CHANNELS }, (_, c) => ({ name: `ch${c}`, unit: 'V' })),
    firstSample: 0,
  },
  { durable: false },
);
const block = 65536;
const data = Array.from({ length: CHANNELS }, () => new Float64Array(block));
for (let at = 0; at < FRAMES; at += block) {
  for (let c = 0; c < CHANNELS; c++) {
    rng.fillGaussian(data[c], 1e-6);
    for (let i = 0; i < block; i++) data[c][i] += 2e-7 * Math.sin((2 * Math.PI * (50 + 1000 * c) * (at + i)) / RATE);
  }
  w.append(data, block);
}
w.close();

const PY = `
import sys, json, numpy as np
from scipy.io import wavfile
from scipy.signal import welch
r, x = wavfile.read(sys.argv[1])
f, p = welch(x.astype(np.float64), fs=r, window="hann", nperseg=4096, noverlap=2048, detrend="constant", axis=0)
df = f[1] - f[0]
cum = np.sqrt(np.cumsum(p[1:], axis=0) * df)
sys.stdout.write(json.dumps({"frequency": f.tolist(), "psd": p.T.tolist(), "cumulative": cum.T.tolist()}))
`;

function timed(cmd: string[]): { wall: number; rssMiB: number } {
  const r = spawnSync('/usr/bin/time', ['-f', '%e %M', ...cmd], { encoding: 'utf8', maxBuffer: 1 << 30 });
  if (r.status !== 0) throw new Error(`${cmd.join(' ')} failed: ${r.stderr}`);
  const last = r.stderr.trimEnd().split('\n').at(-1)!.split(' ');
  return { wall: Number(last[0]), rssMiB: Number(last[1]) / 1024 };
}

function median(v: number[]): number {
  const s = [...v].sort((a, b) => a - b);
  return s[s.length >> 1];
}

const ours = [process.execPath, `${root}bin/floorline.mjs`, 'analyze', file, '--lines', '--cumulative', '--json'];
const theirs = ['python3', '-c', PY, file];
timed(ours); // warm the page cache for both
timed(theirs);
const o: { wall: number; rssMiB: number }[] = [];
const s: { wall: number; rssMiB: number }[] = [];
for (let round = 0; round < ROUNDS; round++) {
  o.push(timed(ours));
  s.push(timed(theirs));
}
const ow = median(o.map((x) => x.wall));
const sw = median(s.map((x) => x.wall));
const orss = median(o.map((x) => x.rssMiB));
const srss = median(s.map((x) => x.rssMiB));
process.stdout.write(`4 ch × 2^22 float32, ${ROUNDS} alternating rounds, medians (wall s / peak RSS MiB)\n`);
process.stdout.write(
  `floorline analyze --lines --cumulative --json: ${ow.toFixed(2)} s, ${orss.toFixed(0)} MiB (rounds ${o.map((x) => x.wall.toFixed(2)).join(' ')})\n`,
);
process.stdout.write(
  `scipy read + welch + cumsum + json:           ${sw.toFixed(2)} s, ${srss.toFixed(0)} MiB (rounds ${s.map((x) => x.wall.toFixed(2)).join(' ')})\n`,
);
const pairs = o.map((x, i) => s[i].wall / x.wall);
process.stdout.write(
  `ratio (scipy / ours): ${(sw / ow).toFixed(2)}× wall of the medians, ${median(pairs).toFixed(2)}× median of the rounds' ratios ` +
    `(${pairs.map((r) => r.toFixed(2)).join(' ')}), ${(srss / orss).toFixed(1)}× memory (target ≥ 2.5× wall)\n`,
);
