// Soak of the history store: the demo recording replayed in a loop at --speed max with the store on, for a given
// wall time; samples the agent's resident memory every 10 s, then stops it (SIGTERM) and reports memory, the
// sample time reached, the store's size and a query over everything it wrote.
// Usage: node scripts/soak/store-soak.mjs [WALL_SECONDS=360] [FOLDER=/tmp/floorline-soak]
import { spawn, spawnSync } from 'node:child_process';
import { mkdirSync, readFileSync, rmSync, statSync } from 'node:fs';
import { join } from 'node:path';

const root = new URL('../..', import.meta.url).pathname;
const seconds = Number(process.argv[2] ?? 360);
const dir = process.argv[3] ?? '/tmp/floorline-soak';
rmSync(dir, { recursive: true, force: true });
mkdirSync(dir, { recursive: true });
const store = join(dir, 'soak.sqlite');
const bin = join(root, 'bin/floorline.mjs');
const child = spawn(
  process.execPath,
  [
    bin,
    'replay',
    join(root, 'recordings/demo.wav'),
    '--loop',
    '--speed',
    'max',
    '--no-server',
    '--quiet',
    '--baseline',
    join(root, 'recordings/demo-baseline.json'),
    '--data',
    dir,
    '--store',
    store,
    '--status-every',
    '0',
  ],
  { stdio: ['ignore', 'pipe', 'inherit'] },
);
let out = '';
child.stdout.setEncoding('utf8').on('data', (t) => (out += t));
const rss = [];
const t0 = Date.now();
const timer = setInterval(() => {
  try {
    const kb = Number(/VmRSS:\s+(\d+)/.exec(readFileSync(`/proc/${child.pid}/status`, 'utf8'))[1]);
    rss.push({ s: Math.round((Date.now() - t0) / 1000), mib: kb / 1024 });
  } catch {
    /* exited */
  }
  if (Date.now() - t0 > seconds * 1000) child.kill('SIGTERM');
}, 10_000);
await new Promise((r) => child.once('exit', r));
clearInterval(timer);
const samples = Number(/samples\s+(\d+)/.exec(out)?.[1] ?? 0);
const warm = rss.find((x) => x.s >= 60) ?? rss[0];
const last = rss[rss.length - 1];
process.stdout.write(
  `soak: ${seconds} s wall, ${(samples / 8000 / 3600).toFixed(2)} h of sample time (${samples} samples per channel)\n`,
);
process.stdout.write(
  `resident memory: ${warm.mib.toFixed(1)} MiB at ${warm.s} s, ${last.mib.toFixed(1)} MiB at ${last.s} s ` +
    `(${(((last.mib - warm.mib) / warm.mib) * 100).toFixed(1)} %), max ${Math.max(...rss.map((x) => x.mib)).toFixed(1)} MiB\n`,
);
process.stdout.write(
  `store: ${(statSync(store).size / 2 ** 20).toFixed(1)} MiB (+ WAL ${(statSync(store + '-wal', { throwIfNoEntry: false })?.size ?? 0) / 2 ** 20} MiB)\n`,
);
const q0 = Date.now();
const trend = spawnSync(
  process.execPath,
  [bin, 'trend', '--store', store, '--channel', 'bridge', '--band', '100:1000', '--every', '1m', '--json'],
  { encoding: 'utf8', maxBuffer: 1 << 28 },
);
const rows = JSON.parse(trend.stdout).series[0].rows;
process.stdout.write(
  `trend --every 1m over all of it: ${rows.length} rows, ${rows.filter((r) => r.gap).length} gap rows, ${Date.now() - q0} ms for the whole command\n`,
);
const inc = JSON.parse(
  spawnSync(process.execPath, [bin, 'incidents', '--store', store, '--json'], { encoding: 'utf8', maxBuffer: 1 << 28 })
    .stdout,
).incidents;
process.stdout.write(`incidents: ${inc.length}\n`);
