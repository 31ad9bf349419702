// `floorline analyze` as a whole process on 4 ch × 2^22 float32 (64 MiB), --threads 1 and --threads 2, against a
// scipy script doing scipy.io.wavfile.read + scipy.signal.welch(axis=0) on the same file, also a whole process.
// Alternating rounds, medians of wall time and of peak RSS (/usr/bin/time %M). Checks before timing that both
// thread counts give the same report and that its PSDs are within 1e-9 (relative) of scipy's.
import { spawnSync } from 'node:child_process';
import { mkdirSync } from 'node:fs';

// bench.mjs runs every benchmark from the repository root.
const root = `${process.cwd()}/`;
const tmp = `${root}.bench-tmp/`;
mkdirSync(tmp, { recursive: true });
const file = `${tmp}analyze-4ch.wav`;
const RATE = 100000;
const ROUNDS = Number(process.env.ROUNDS ?? 5);

const make = spawnSync(
  'python3',
  [
    '-c',
    `
import numpy as np, sys
from scipy.io import wavfile
rng = np.random.default_rng(15)
wavfile.write(sys.argv[1], ${RATE}, (rng.standard_normal((1 << 22, 4)) * 0.1).astype(np.float32))
`,
    file,
  ],
  { encoding: 'utf8' },
);
if (make.status !== 0) throw new Error(make.stderr);

const SCIPY = `
import sys, json, numpy as np
from scipy.io import wavfile
from scipy.signal import welch
r, y = wavfile.read(sys.argv[1])
f, p = welch(y.astype(np.float64), fs=r, window="hann", nperseg=4096, noverlap=2048, detrend="constant", axis=0)
if len(sys.argv) > 2: json.dump(p.T.tolist(), open(sys.argv[2], "w"))
`;

function timed(cmd: string[]): { ms: number; rssMiB: number; stdout: string } {
  const t0 = performance.now();
  const r = spawnSync('/usr/bin/time', ['-f', '%M', ...cmd], { encoding: 'utf8', maxBuffer: 256 << 20 });
  const ms = performance.now() - t0;
  if (r.status !== 0) throw new Error(`${cmd.join(' ')} failed: ${r.stderr}`);
  const lines = r.stderr.trim().split('\n');
  return { ms, rssMiB: Number(lines[lines.length - 1]) / 1024, stdout: r.stdout };
}
const ours = (threads: number): string[] => [
  process.execPath,
  `${root}bin/floorline.mjs`,
  'analyze',
  file,
  '--segment',
  '4096',
  '--json',
  '--threads',
  String(threads),
];
const scipy = ['python3', '-c', SCIPY, file];

// Same report on both thread counts, and within 1e-9 of scipy.signal.welch.
const one = timed(ours(1)).stdout;
if (timed(ours(2)).stdout !== one) throw new Error('--threads 2 report differs from --threads 1');
spawnSync('python3', ['-c', SCIPY, file, `${tmp}analyze-scipy.json`]);
const ref = JSON.parse(
  await (await import('node:fs/promises')).readFile(`${tmp}analyze-scipy.json`, 'utf8'),
) as number[][];
const report = JSON.parse(one) as { channels: { psd: number[] }[] };
let worst = 0;
for (let c = 0; c < 4; c++)
  ref[c].forEach((v, k) => (worst = Math.max(worst, Math.abs(report.channels[c].psd[k] - v) / v)));

const runs: Record<string, { ms: number[]; rss: number[] }> = {
  t1: { ms: [], rss: [] },
  t2: { ms: [], rss: [] },
  scipy: { ms: [], rss: [] },
};
for (let i = 0; i < ROUNDS; i++) {
  for (const [key, cmd] of [
    ['t1', ours(1)],
    ['t2', ours(2)],
    ['scipy', scipy],
  ] as const) {
    const r = timed(cmd as string[]);
    runs[key].ms.push(r.ms);
    runs[key].rss.push(r.rssMiB);
  }
}
const med = (xs: number[]): number => [...xs].sort((a, b) => a - b)[xs.length >> 1];
const s = med(runs.scipy.ms);
const sr = med(runs.scipy.rss);
console.log(`4 ch × 2^22 float32, Welch 4096 hann 50 % mean, whole processes, ${ROUNDS} alternating rounds (medians)`);
console.log(`scipy read + welch       ${s.toFixed(0).padStart(6)} ms   peak RSS ${sr.toFixed(0)} MiB`);
for (const key of ['t1', 't2'] as const) {
  const m = med(runs[key].ms);
  const r = med(runs[key].rss);
  console.log(
    `floorline --threads ${key.slice(1)}    ${m.toFixed(0).padStart(6)} ms   peak RSS ${r.toFixed(0)} MiB   ${(s / m).toFixed(2)}× scipy, ${(sr / r).toFixed(1)}× less memory`,
  );
}
console.log(
  `reports of --threads 1 and 2 identical; max relative difference to scipy.signal.welch ${worst.toExponential(2)}`,
);
