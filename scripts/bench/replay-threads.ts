// `floorline replay --speed max` as a whole process, side by side in one run: `--no-server` (no low-frequency view:
// nothing could read it) at --threads 1 and 2 (the Welch estimators and cross-spectra on a worker) and served on port
// 0 (the view runs) at --threads 1 and 2 (the view and the analysis on workers), on an
// hour (DURATION seconds) of the demo rig, 2 ch × 8 kS/s made by `floorline simulate`, with the demo baseline and
// every rule. Alternating rounds, medians of wall time, CPU (user + system) and peak RSS (/usr/bin/time), the load
// average around each run; the snapshot digest and the event log must be the same in every run.
import { spawnSync } from 'node:child_process';
import { existsSync, mkdirSync, readFileSync, rmSync } from 'node:fs';

// bench.mjs runs every benchmark from the repository root.
const root = `${process.cwd()}/`;
const tmp = `${root}.bench-tmp/`;
mkdirSync(tmp, { recursive: true });
const DURATION = Number(process.env.DURATION ?? 3600);
const ROUNDS = Number(process.env.ROUNDS ?? 3);
// Each entry: how it serves and --threads, e.g. "no-server:1".
const MODES = (process.env.MODES ?? 'no-server:1,no-server:2,served:1,served:2').split(',');
const file = process.env.REPLAY_FILE ?? `${tmp}replay-2x8k-${DURATION}s.wav`;
const cli = `${root}bin/floorline.mjs`;

if (!existsSync(file)) {
  const made = spawnSync(
    process.execPath,
    [cli, 'simulate', `${root}recordings/demo-scenario.json`, '--out', file, '--duration', String(DURATION)],
    { encoding: 'utf8' },
  );
  if (made.status !== 0) throw new Error(`simulate failed: ${made.stderr}`);
}

const load = (): string => readFileSync('/proc/loadavg', 'utf8').split(' ')[0];
const median = (v: number[]): number => [...v].sort((a, b) => a - b)[v.length >> 1];

interface Run {
  wall: number;
  cpu: number;
  rssMiB: number;
  digest: string;
  events: string;
  load: string;
}

function replay(mode: string, round: number): Run {
  const [serving, threads] = mode.split(':');
  const data = `${tmp}replay-threads-data-${serving}-${threads}`;
  const events = `${tmp}replay-threads-events-${serving}-${threads}-${round}.jsonl`;
  rmSync(events, { force: true });
  const before = load();
  const r = spawnSync(
    '/usr/bin/time',
    [
      '-f',
      '%e %U %S %M',
      process.execPath,
      cli,
      'replay',
      file,
      '--speed',
      'max',
      '--baseline',
      `${root}recordings/demo-baseline.json`,
      ...(serving === 'served' ? ['--http-port', '0'] : ['--no-server']),
      '--no-history',
      '--quiet',
      '--data',
      data,
      '--events-out',
      events,
      '--threads',
      String(threads),
    ],
    { encoding: 'utf8' },
  );
  if (r.status !== 0) throw new Error(`replay ${mode} failed: ${r.stderr}`);
  const [wall, user, sys, kb] = r.stderr.trim().split('\n').at(-1)!.split(' ').map(Number);
  const digest = /digest ([0-9a-f]+)/.exec(r.stdout)?.[1];
  if (!digest) throw new Error(`no digest in the replay's summary:\n${r.stdout}`);
  return {
    wall,
    cpu: user + sys,
    rssMiB: kb / 1024,
    digest,
    events: readFileSync(events, 'utf8'),
    load: `${before}→${load()}`,
  };
}

const runs = new Map<string, Run[]>(MODES.map((m) => [m, []]));
for (let round = 0; round < ROUNDS; round++)
  for (const m of MODES) {
    const run = replay(m, round);
    runs.get(m)!.push(run);
    process.stdout.write(
      `round ${round + 1} ${m}: ${run.wall.toFixed(2)} s wall, ${run.cpu.toFixed(2)} s CPU, ${run.rssMiB.toFixed(0)} MiB, load ${run.load}\n`,
    );
  }
const first = runs.get(MODES[0])![0];
for (const [m, list] of runs)
  for (const r of list) {
    if (r.digest !== first.digest) throw new Error(`${m}: digest ${r.digest} differs from ${first.digest}`);
    if (r.events !== first.events) throw new Error(`${m}: the event log differs`);
  }
process.stdout.write(
  `\n${DURATION} s of 2 ch × 8 kS/s (${file}), ${ROUNDS} alternating rounds, digest ${first.digest}, ` +
    `${first.events.trim().split('\n').length} events, identical in every run\n`,
);
process.stdout.write(
  '| serving:threads | wall s (median) | CPU s (median) | peak RSS MiB (median) | × real time |\n|---|---|---|---|---|\n',
);
for (const [t, list] of runs) {
  const wall = median(list.map((r) => r.wall));
  process.stdout.write(
    `| ${t} | ${wall.toFixed(2)} | ${median(list.map((r) => r.cpu)).toFixed(2)} | ${median(list.map((r) => r.rssMiB)).toFixed(0)} | ${(DURATION / wall).toFixed(0)} |\n`,
  );
}
