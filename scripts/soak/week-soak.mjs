// Week soak: the demo recording looping at --speed max against its baseline, with the dashboard server, the data
// folder (captures, event log) and the history store on, until SAMPLE_SECONDS of sample time (default 7 days).
// Every 30 s of wall time it reads /api/status (its size, the sample reached) and the agent's resident memory.
// At the end the agent is killed with SIGKILL (no chance to flush), the store is checked with python's sqlite3,
// the agent is started once more on the same folder for 20 s (the series must continue), and the store is queried
// with `floorline trend`, `floorline incidents` and `floorline report`. Prints one block of figures for
// BENCHMARKS.md. Usage: node scripts/soak/week-soak.mjs [SAMPLE_SECONDS=604800] [FOLDER=/tmp/floorline-week]
import { spawn, spawnSync } from 'node:child_process';
import { mkdirSync, readFileSync, readdirSync, rmSync, statSync } from 'node:fs';
import { join } from 'node:path';

const root = new URL('../..', import.meta.url).pathname;
const target = Number(process.argv[2] ?? 604_800);
const dir = process.argv[3] ?? '/tmp/floorline-week';
const port = Number(process.env.SOAK_PORT ?? 18791);
const bin = join(root, 'bin/floorline.mjs');
const store = join(dir, 'floorline.sqlite');
const rate = 8000; // the demo's sample rate
rmSync(dir, { recursive: true, force: true });
mkdirSync(dir, { recursive: true });

const say = (s) => process.stdout.write(s + '\n');
const sleep = (ms) => new Promise((r) => setTimeout(r, ms));

function startAgent(extra = []) {
  const args = [
    bin,
    'replay',
    join(root, 'recordings/demo.wav'),
    '--loop',
    '--speed',
    'max',
    '--baseline',
    join(root, 'recordings/demo-baseline.json'),
    '--data',
    dir,
    '--store',
    store,
    '--http-port',
    String(port),
    '--status-every',
    '0',
    '--quiet',
    ...extra,
  ];
  const child = spawn(process.execPath, args, { stdio: ['ignore', 'pipe', 'pipe'] });
  let err = '';
  child.stdout.resume();
  child.stderr.setEncoding('utf8').on('data', (t) => (err = (err + t).slice(-4000)));
  child.lastStderr = () => err;
  return child;
}

function rssMiB(pid) {
  try {
    return Number(/VmRSS:\s+(\d+)/.exec(readFileSync(`/proc/${pid}/status`, 'utf8'))[1]) / 1024;
  } catch {
    return NaN;
  }
}

async function status() {
  const r = await fetch(`http://127.0.0.1:${port}/api/status`, { signal: AbortSignal.timeout(10_000) });
  const text = await r.text();
  return { bytes: Buffer.byteLength(text), body: JSON.parse(text) };
}

async function waitForServer(child) {
  for (let i = 0; i < 200; i++) {
    if (child.exitCode !== null) throw new Error(`agent exited: ${child.lastStderr()}`);
    try {
      return await status();
    } catch {
      await sleep(100);
    }
  }
  throw new Error('agent did not answer /api/status in 20 s');
}

function folderFigures() {
  let files = 0;
  let bytes = 0;
  let captures = 0;
  const walk = (d) => {
    for (const e of readdirSync(d, { withFileTypes: true })) {
      const p = join(d, e.name);
      if (e.isDirectory()) walk(p);
      else {
        files++;
        bytes += statSync(p).size;
        if (e.name.startsWith('capture-') && e.name.endsWith('.wav')) captures++;
      }
    }
  };
  walk(dir);
  return { files, bytes, captures };
}

const python = (code) => spawnSync('python3', ['-c', code, store], { encoding: 'utf8' });
const cli = (...args) => spawnSync(process.execPath, [bin, ...args], { encoding: 'utf8', maxBuffer: 1 << 29 });

// 1. The week.
const wall0 = Date.now();
const agent = startAgent();
await waitForServer(agent);
const samplesLog = [];
let last = null;
for (;;) {
  await sleep(Number(process.env.SOAK_POLL_MS ?? 30_000));
  if (agent.exitCode !== null) throw new Error(`agent exited during the soak: ${agent.lastStderr()}`);
  const s = await status();
  last = s;
  samplesLog.push({
    wall: (Date.now() - wall0) / 1000,
    t: s.body.t,
    rss: rssMiB(agent.pid),
    statusBytes: s.bytes,
    alarms: s.body.alarms.length,
  });
  const p = samplesLog[samplesLog.length - 1];
  if (samplesLog.length % 20 === 1)
    say(
      `  ${p.wall.toFixed(0)} s wall: t = ${(p.t / 3600).toFixed(1)} h, RSS ${p.rss.toFixed(1)} MiB, status ${p.statusBytes} B`,
    );
  if (s.body.t >= target) break;
}
// 2. kill -9 right after a status read: what the store holds against what the agent had reached.
const reached = (await status()).body.t;
agent.kill('SIGKILL');
await new Promise((r) => agent.once('exit', r));
const wallWeek = (Date.now() - wall0) / 1000;
const afterKill = folderFigures();
const check = python(
  `import sqlite3,sys,json
c=sqlite3.connect(sys.argv[1])
ok=c.execute('pragma integrity_check').fetchone()[0]
run=c.execute('select max(id) from runs').fetchone()[0]
k=c.execute('select max(k) from trend_snap where run=?',(run,)).fetchone()[0]
print(json.dumps({'integrity':ok,'run':run,'lastSnapK':k}))`,
);
if (check.status !== 0) throw new Error(`python sqlite3 could not open the store: ${check.stderr}`);
const afterKillStore = JSON.parse(check.stdout);
const snapSeconds = 1 / 10; // snapshot interval of the default --snapshot-rate 10
const storedT = (afterKillStore.lastSnapK + 1) * snapSeconds;

// 3. Restart on the same folder and store: the store opens and a new run continues the series.
const again = startAgent();
await waitForServer(again);
await sleep(20_000);
const againT = (await status()).body.t;
again.kill('SIGTERM');
await new Promise((r) => again.once('exit', r));
const runs = JSON.parse(
  python(
    `import sqlite3,sys,json
c=sqlite3.connect(sys.argv[1])
print(json.dumps([{'run':r,'rows1s':n} for r,n in c.execute('select run,count(*) from trend_1s group by run order by run')]))`,
  ).stdout,
);

// 4. Queries over the whole store.
const q = (args) => {
  const t0 = Date.now();
  const r = cli(...args);
  return { ms: Date.now() - t0, r };
};
const minute = q(['trend', '--store', store, '--channel', 'bridge', '--band', '100:1000', '--every', '1m', '--json']);
const minuteRows = JSON.parse(minute.r.stdout).series[0].rows;
const lastLoop = Math.floor(reached / 60) - 1; // the last whole demo loop of the week (60 s each)
const secondQ = q([
  'trend',
  '--store',
  store,
  '--channel',
  'bridge',
  '--band',
  '100:1000',
  '--every',
  '1s',
  '--from',
  `t=${lastLoop * 60}`,
  '--to',
  `t=${lastLoop * 60 + 60}`,
  '--json',
]);
const secondRows = JSON.parse(secondQ.r.stdout).series[0].rows;
const incidents = q(['incidents', '--store', store, '--json']);
const incidentList = JSON.parse(incidents.r.stdout).incidents;
const reportFile = join(dir, 'week-report.html');
const report = spawnSync(
  '/usr/bin/time',
  ['-f', '%e %M', process.execPath, bin, 'report', '--data', dir, '--store', store, '-o', reportFile],
  {
    encoding: 'utf8',
  },
);
const [reportWall, reportKb] = report.stderr.trim().split('\n').pop().split(' ').map(Number);

// 5. Figures.
const warm = samplesLog.find((x) => x.wall >= 120) ?? samplesLog[0];
const end = samplesLog[samplesLog.length - 1];
const rssMax = Math.max(...samplesLog.map((x) => x.rss));
const statusMax = Math.max(...samplesLog.map((x) => x.statusBytes));
say(
  `week soak: ${(reached / 86400).toFixed(2)} days of sample time in ${(wallWeek / 60).toFixed(1)} min of wall time (${(reached / wallWeek).toFixed(0)}× real time)`,
);
say(
  `resident memory: ${warm.rss.toFixed(1)} MiB at ${warm.wall.toFixed(0)} s, ${end.rss.toFixed(1)} MiB at the end (${(((end.rss - warm.rss) / warm.rss) * 100).toFixed(1)} %), max ${rssMax.toFixed(1)} MiB`,
);
say(`/api/status: ${end.statusBytes} bytes at the end, max ${statusMax} bytes; alarm rows at the end ${end.alarms}`);
say(
  `data folder after the week: ${afterKill.files} files, ${(afterKill.bytes / 2 ** 20).toFixed(1)} MiB, ${afterKill.captures} capture WAVs`,
);
say(`store: ${(statSync(store).size / 2 ** 20).toFixed(1)} MiB after the restart`);
say(
  `kill -9: integrity ${afterKillStore.integrity}; agent had reached t = ${reached.toFixed(1)} s, the store holds snapshots to t = ${storedT.toFixed(1)} s (${(reached - storedT).toFixed(1)} s of sample time, ${((reached - storedT) / (reached / wallWeek)).toFixed(2)} s of wall time)`,
);
say(
  `restart: ran to t = ${againT.toFixed(1)} s in 20 s; 1 s rows per run: ${runs.map((x) => `run ${x.run}: ${x.rows1s}`).join(', ')}`,
);
say(
  `trend --every 1m over the week: ${minuteRows.length} rows (${(reached / 60).toFixed(0)} minutes of sample time), ${minuteRows.filter((r) => r.gap).length} gap rows, ${minute.ms} ms`,
);
say(
  `trend --every 1s of the last whole loop (t = ${lastLoop * 60}…${lastLoop * 60 + 60} s): ${secondRows.length} rows, ${secondQ.ms} ms`,
);
// The scripted floor rise (300–1200 Hz, 38–46 s into each loop) shows as the rows standing above the loop's median.
const means = secondRows.map((r) => r.mean).sort((a, b) => a - b);
const median = means[Math.floor(means.length / 2)];
const high = secondRows.filter((r) => r.mean > 1.5 * median).map((r) => r.t - lastLoop * 60);
say(
  `  median ${(median * 1e6).toFixed(2)} µV; rows above 1.5× the median at loop seconds ${high.join(', ')} (scripted rise 38–46 s)`,
);
say(`incidents: ${incidentList.length} (${incidents.ms} ms)`);
say(
  `report over the whole store: exit ${report.status}, ${reportWall} s, peak RSS ${(reportKb / 1024).toFixed(0)} MiB, ${(statSync(reportFile, { throwIfNoEntry: false })?.size ?? 0) / 1024} KiB`,
);
