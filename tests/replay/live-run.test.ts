// `floorline run` live from the simulator through a real pty, recording; then `floorline replay` of that
// recording: the same spectra (snapshot digest) as the live run, and the recorded samples equal the simulator's
// own WAV of the same scenario and seed, as scipy.io.wavfile reads both.
import { spawn, spawnSync } from 'node:child_process';
import { readdirSync, readFileSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { PtyPair, startSimulator } from '../serial/pty-pair.ts';
import { Python, root, tempDir } from '../wav/support.ts';

const bin = join(root, 'bin/floorline.mjs');
let dir: string;
let py: Python;
let pair: PtyPair;

const scenario = {
  rate: 4000,
  format: 'int24',
  board: 'live test rig (invented)',
  seed: 77,
  channels: [
    {
      name: 'a',
      unit: 'V',
      perCount: 2.98e-7,
      signals: [
        { kind: 'white', density: 40e-9 },
        { kind: 'tone', frequency: 312.5, rms: 2e-6, start: 3 },
      ],
    },
    { name: 'b', unit: 'V', perCount: 2.98e-7, signals: [{ kind: 'white', density: 15e-9 }] },
  ],
};

beforeAll(async () => {
  dir = tempDir('live-run');
  py = new Python();
  pair = new PtyPair(join(dir, 'board'), join(dir, 'host'));
  await pair.start();
});

afterAll(async () => {
  py.close();
  await pair.kill();
});

const digest = (s: string) => /digest ([0-9a-f]+)/.exec(s)?.[1];

describe('floorline run', () => {
  it("records a live run whose replay gives the same snapshots; the samples are the simulator's", async () => {
    const scenarioPath = join(dir, 'scenario.json');
    writeFileSync(scenarioPath, JSON.stringify(scenario));
    const data = join(dir, 'data');
    // A deep analysis queue (4096 blocks ≈ 41 s here): this test is about live = replay, not about overruns, and a
    // loaded CI machine may stall the agent for longer than the default 64 blocks (0.64 s) cover.
    const run = spawn(
      process.execPath,
      [
        bin,
        'run',
        '--port',
        pair.host,
        '--no-server',
        '--quiet',
        '--record',
        '--data',
        data,
        '--duration',
        '5',
        '--segment',
        '1024',
        '--status-every',
        '0',
        '--queue',
        '4096',
      ],
      {
        stdio: ['ignore', 'pipe', 'pipe'],
        cwd: dir,
      },
    );
    let out = '';
    let err = '';
    run.stdout.on('data', (d: Buffer) => (out += d));
    run.stderr.on('data', (d: Buffer) => (err += d));
    const exited = new Promise<number | null>((r) => run.once('exit', (code) => r(code)));
    await new Promise((r) => setTimeout(r, 1000)); // let run open the port first
    const sim = startSimulator([scenarioPath, '--out', pair.board, '--duration', '7']);
    const code = await exited;
    sim.proc.kill('SIGTERM');
    await sim.exited;
    expect(code, err).toBe(0);
    expect(out).toMatch(/health {5}gaps 0/);
    expect(out).toMatch(/dropped blocks 0/);

    const recordings = readdirSync(join(data, 'recordings')).filter((f) => f.startsWith('rec-') && f.endsWith('.wav'));
    expect(recordings).toHaveLength(1);
    const wav = join(data, 'recordings', recordings[0]);
    const first = JSON.parse(readFileSync(`${wav}.json`, 'utf8')).firstSample;

    // Replay of the recording: bit-identical snapshots (same digest) at the same sample instants.
    const replay = spawnSync(
      process.execPath,
      [
        bin,
        'replay',
        wav,
        '--speed',
        'max',
        '--no-server',
        '--quiet',
        '--segment',
        '1024',
        '--data',
        join(dir, 'data2'),
      ],
      { encoding: 'utf8', cwd: dir },
    );
    expect(replay.status, replay.stderr).toBe(0);
    expect(digest(out)).toBeDefined();
    expect(digest(replay.stdout)).toBe(digest(out));
    const snaps = (s: string) => /snapshots {2}(\d+)/.exec(s)?.[1];
    expect(Number(snaps(out))).toBeGreaterThan(10);
    expect(snaps(replay.stdout)).toBe(snaps(out));

    // The simulator's own WAV of the same scenario and seed, read by scipy.io.wavfile, holds the same samples.
    const ref = join(dir, 'reference.wav');
    const made = spawnSync(process.execPath, [bin, 'simulate', scenarioPath, '--out', ref, '--duration', '7'], {
      encoding: 'utf8',
    });
    expect(made.status, made.stderr).toBe(0);
    const same = await py.run<{ equal: boolean; frames: number }>(
      `fs, rec = wavfile.read(args[0]); fs2, ref = wavfile.read(args[1])
result = {"equal": bool(fs == fs2 and np.array_equal(rec, ref[args[2]: args[2] + len(rec)])), "frames": int(len(rec))}`,
      wav,
      ref,
      first,
    );
    expect(same.frames).toBeGreaterThanOrEqual(5 * 4000 - first);
    expect(same.equal).toBe(true);
  });

  it('refuses a missing --port and text mode without --rate with exit 2', () => {
    const a = spawnSync(process.execPath, [bin, 'run', '--no-server'], { encoding: 'utf8' });
    expect(a.status).toBe(2);
    expect(a.stderr).toMatch(/--port is required/);
    const b = spawnSync(process.execPath, [bin, 'run', '--port', '/dev/null', '--format', 'text', '--no-server'], {
      encoding: 'utf8',
    });
    expect(b.status).toBe(2);
    expect(b.stderr).toMatch(/--rate HZ/);
  });
});
