// The report's Health section on a real live run: the simulator plays a scenario with link faults (garbage, a
// flipped byte, two withheld frames) and an overload into a real pty pair (socat), `floorline run` reads it with
// the server and the store on. The counts the report shows are those /metrics gave at the end of the run and
// those python's sqlite3 reads from the store's health table; the link faults themselves are as
// agent/framing/PROTOCOL.md states (garbage: one sync error, nothing lost; a corrupt frame: one CRC error and a
// gap of its instants; withheld frames: a gap by the sequence counter).
import { spawn } from 'node:child_process';
import { mkdtempSync, readFileSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, describe, expect, it } from 'vitest';
import { PtyPair, startSimulator } from '../serial/pty-pair.ts';
import { Python, root } from '../wav/support.ts';
import { cliIn } from '../store/support.ts';
import { freePort } from '../browser/support/agent.ts';

const dir = mkdtempSync(join(tmpdir(), 'fl-report-health-'));
const pair = new PtyPair(join(dir, 'board'), join(dir, 'host'));
const floorline = cliIn(() => dir);
let py: Python | undefined;
afterAll(async () => {
  await pair.kill();
  py?.close();
});

const RATE = 8000;
const SECONDS = 6;
// 10 ms frames (SCENARIO.md default frameMs): 80 instants each.
const FRAME = RATE / 100;
const scenario = {
  rate: RATE,
  format: 'int24',
  seed: 5,
  channels: [
    { name: 'a', perCount: 1e-6, signals: [{ kind: 'white', density: 1e-6 }] },
    {
      name: 'b',
      perCount: 1e-6,
      signals: [
        { kind: 'white', density: 1e-6 },
        { kind: 'overload', start: 4.0, end: 4.2, frequency: 100, overdrive: 1.5 },
      ],
    },
  ],
  link: { garbage: [{ at: 1.0, bytes: 48 }], corrupt: [{ at: 2.0, bytes: 1 }], drop: [{ at: 3.0, frames: 2 }] },
};

function metrics(text: string): Map<string, number> {
  const out = new Map<string, number>();
  for (const line of text.split('\n')) {
    const m = /^(floorline_[a-z_]+_total) (\S+)$/.exec(line);
    if (m) out.set(m[1], Number(m[2]));
  }
  return out;
}

describe('report health on a live serial run', () => {
  it('shows the counts of /metrics and of the store, per run and in total', async () => {
    writeFileSync(join(dir, 'faults.json'), JSON.stringify(scenario));
    await pair.start();
    const port = await freePort();
    const store = join(dir, 's.sqlite');
    const agent = spawn(
      process.execPath,
      [
        join(root, 'bin/floorline.mjs'),
        'run',
        '--port',
        pair.host,
        '--data',
        join(dir, 'data'),
        '--store',
        store,
        '--http-port',
        String(port),
        '--quiet',
        '--status-every',
        '0',
      ],
      { stdio: ['ignore', 'ignore', 'pipe'] },
    );
    let err = '';
    agent.stderr.on('data', (c) => (err += c));
    const exited = new Promise<number | null>((r) => agent.on('exit', r));
    let last = new Map<string, number>();
    const read = async () => {
      try {
        last = metrics(await (await fetch(`http://127.0.0.1:${port}/metrics`)).text());
      } catch {
        /* not listening yet */
      }
      return last;
    };
    // Polls /metrics every 200 ms until `cond` holds (a loaded machine: conditions, never fixed sleeps).
    const until = async (what: string, cond: () => boolean, ms: number) => {
      const t0 = Date.now();
      while (!(await read(), cond())) {
        if (Date.now() - t0 > ms) throw new Error(`timed out waiting for ${what}: ${JSON.stringify([...last])} ${err}`);
        await new Promise((r) => setTimeout(r, 200));
      }
    };
    try {
      await until('the agent to listen', () => last.size > 0, 30_000);
      const sim = startSimulator([join(dir, 'faults.json'), '--out', pair.board, '--duration', String(SECONDS)]);
      expect(await sim.exited, sim.stderr()).toBe(0);
      const delivered = RATE * SECONDS - 3 * FRAME;
      await until('every sample counted by /metrics', () => last.get('floorline_samples_total') === delivered, 60_000);
      // Two commits at least (500 ms each) after the last sample, then a clean stop.
      await new Promise((r) => setTimeout(r, 1500));
      await read();
      agent.kill('SIGINT');
      expect(await exited, err).toBe(0);
    } finally {
      if (agent.exitCode === null) agent.kill('SIGKILL');
    }
    // The link faults as PROTOCOL.md states them.
    expect(last.get('floorline_crc_errors_total')).toBe(1);
    expect(last.get('floorline_sync_errors_total')).toBe(1);
    expect(last.get('floorline_gaps_total')).toBe(2);
    expect(last.get('floorline_lost_samples_total')).toBe(3 * FRAME);

    // The store's health table, read by python's sqlite3: the last reading of each run, summed.
    py = new Python();
    const stored = await py.run<number[]>(
      `import sqlite3
db = sqlite3.connect(args[0])
cols = ['samples', 'gaps', 'lost_samples', 'crc_errors', 'sync_errors', 'nonfinite_frames', 'dropped_blocks', 'dropped_samples', 'clipped_samples', 'deleted_files']
rows = db.execute('select ' + ', '.join(cols) + ' from health h where k = (select max(k) from health where run = h.run)').fetchall()
result = [sum(r[i] for r in rows) for i in range(len(cols))]`,
      store,
    );
    const fromMetrics = [
      last.get('floorline_samples_total'),
      last.get('floorline_gaps_total'),
      last.get('floorline_lost_samples_total'),
      last.get('floorline_crc_errors_total'),
      last.get('floorline_sync_errors_total'),
      last.get('floorline_nonfinite_frames_total'),
      last.get('floorline_dropped_blocks_total'),
    ];
    expect(stored.slice(0, 7)).toEqual(fromMetrics);
    // The overload clips channel b for 0.2 s: some hundreds of samples (a sine above full scale half the time).
    expect(stored[8]).toBeGreaterThan(0.05 * RATE * 0.2);

    const r = floorline('report', '--store', store, '-o', 'health.html');
    expect(r.status, r.stderr).toBe(0);
    const html = readFileSync(join(dir, 'health.html'), 'utf8');
    const health = html.slice(html.indexOf('<h2>5. Health</h2>'), html.indexOf('<h2>6. Methods</h2>'));
    const total = /<tr><th>total<\/th>((?:<td class="n">-?\d+<\/td>)+)<\/tr>/.exec(health);
    expect(total, health).not.toBeNull();
    const cells = [...total![1].matchAll(/<td class="n">(-?\d+)<\/td>/g)].map((m) => Number(m[1]));
    expect(cells).toEqual(stored);
    expect(health).toMatch(/Runs with counters in the span: 1, from 1 start of the agent \(0 restarts\)/);
    // The events of the faults are there too: two gaps raised, a clip raised.
    expect(health).toMatch(/<td>gap<\/td><td>raised<\/td><td class="n">2<\/td>/);
    expect(health).toMatch(/<td>clip<\/td><td>raised<\/td>/);
  }, 180_000);
});
