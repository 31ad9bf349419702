// Resident memory over a long `floorline replay --speed max` with the demo baseline and every detector: RSS of the
// replay process sampled from /proc every second, reported at 10 %, 50 % and 100 % of the wall time, with the
// growth from 10 % to the end (target: within 10 %). The recording is made beforehand (a day takes minutes):
//   floorline simulate recordings/demo-scenario.json --out /tmp/day.wav --duration 86400
//   REPLAY_FILE=/tmp/day.wav npm run bench -- replay-memory
// SERVED=1 serves on port 0 instead of --no-server, so the live low-frequency view runs too.
import { spawn } from 'node:child_process';
import { existsSync, readFileSync } from 'node:fs';

const file = process.env.REPLAY_FILE;
if (!file || !existsSync(file)) {
  console.log(
    'replay-memory: set REPLAY_FILE to a long recording (see the header of scripts/bench/replay-memory.ts); skipped',
  );
  process.exit(0);
}
const root = `${process.cwd()}/`;
const t0 = performance.now();
const child = spawn(
  process.execPath,
  [
    `${root}bin/floorline.mjs`,
    'replay',
    file,
    '--speed',
    'max',
    '--baseline',
    `${root}recordings/demo-baseline.json`,
    ...(process.env.SERVED ? ['--http-port', '0'] : ['--no-server']),
    '--data',
    `${root}.bench-tmp/replay-memory-data`,
  ],
  {
    stdio: ['ignore', 'pipe', 'inherit'],
  },
);
let out = '';
child.stdout.on('data', (d) => (out += String(d)));
const samples: { t: number; rss: number }[] = [];
const timer = setInterval(() => {
  try {
    const m = /VmRSS:\s+(\d+) kB/.exec(readFileSync(`/proc/${child.pid}/status`, 'utf8'));
    if (m) samples.push({ t: performance.now() - t0, rss: Number(m[1]) / 1024 });
  } catch {
    // the process has just ended
  }
}, 1000);
const code = await new Promise<number | null>((r) => child.on('exit', r));
clearInterval(timer);
if (code !== 0) throw new Error(`replay exited with ${code}`);
const wall = performance.now() - t0;
const at = (f: number): number => samples.find((s) => s.t >= f * wall)?.rss ?? NaN;
const last = samples[samples.length - 1].rss;
const peak = Math.max(...samples.map((s) => s.rss));
console.log(
  out
    .split('\n')
    .filter((l) => /^(samples|snapshots|events)/.test(l))
    .join('\n'),
);
console.log(
  `RSS at 10 % ${at(0.1).toFixed(1)} MiB, 50 % ${at(0.5).toFixed(1)} MiB, end ${last.toFixed(1)} MiB, peak ${peak.toFixed(1)} MiB; growth 10 % → end ${(((last - at(0.1)) / at(0.1)) * 100).toFixed(1)} %`,
);
