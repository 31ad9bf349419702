// `--unit V` on replay and baseline, as on analyze: a float WAV written by another tool (here scipy.io.wavfile,
// no sidecar) reads as FS until told its unit; a file whose metadata names another unit is refused, naming the
// channel. The numbers do not change, only their unit.
import { spawnSync } from 'node:child_process';
import { mkdtempSync, readFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { DEMO_WAV, floorline, readJsonLines } from '../support/cli.ts';

const dir = mkdtempSync(join(tmpdir(), 'floorline-unit-flag-'));
const wav = join(dir, 'other-tool.wav');
spawnSync('python3', [
  '-c',
  `import numpy as np, scipy.io.wavfile as w, sys
w.write(sys.argv[1], 2000, (1e-6 * np.random.default_rng(3).standard_normal((20000, 2))).astype(np.float32))`,
  wav,
]);

const run = (args: string[]) => floorline(args, { timeout: 60_000 });
const units = (snapshots: string) =>
  readJsonLines<{ channels: { unit: string; psd: number[] }[] }>(snapshots).at(-1)!.channels;

describe('--unit', () => {
  it('names the unit of FS samples in replay without changing a number', () => {
    const common = [wav, '--speed', 'max', '--no-server', '--no-history', '--quiet', '--segment', '256'];
    const a = run(['replay', ...common, '--data', join(dir, 'a'), '--snapshots-out', join(dir, 'a.jsonl')]);
    const b = run([
      'replay',
      ...common,
      '--unit',
      'V',
      '--data',
      join(dir, 'b'),
      '--snapshots-out',
      join(dir, 'b.jsonl'),
    ]);
    expect(a.status, a.stderr).toBe(0);
    expect(b.status, b.stderr).toBe(0);
    const [fs, volts] = [units(join(dir, 'a.jsonl')), units(join(dir, 'b.jsonl'))];
    expect(fs.map((c) => c.unit)).toEqual(['FS', 'FS']);
    expect(volts.map((c) => c.unit)).toEqual(['V', 'V']);
    expect(volts.map((c) => c.psd)).toEqual(fs.map((c) => c.psd));
  });

  it('names the unit in a baseline taken from such a file', () => {
    const r = run(['baseline', wav, '-o', join(dir, 'base.json'), '--unit', 'V', '--segment', '256']);
    expect(r.status, r.stderr).toBe(0);
    const b = JSON.parse(readFileSync(join(dir, 'base.json'), 'utf8')) as { channels: { unit: string }[] };
    expect(b.channels.map((c) => c.unit)).toEqual(['V', 'V']);
  });

  it('refuses a unit the metadata contradicts, naming the channel (the demo is in volts)', () => {
    for (const cmd of [
      ['replay', DEMO_WAV, '--speed', 'max', '--no-server', '--no-history', '--data', join(dir, 'c')],
      ['baseline', DEMO_WAV, '-o', join(dir, 'no.json')],
    ]) {
      const r = run([...cmd, '--unit', 'A']);
      expect(r.status).toBe(2);
      expect(r.stderr).toMatch(/--unit A: channel bridge of .*demo\.wav is already in V by its metadata; drop --unit/);
      expect(r.stderr).not.toMatch(/\n\s+at /); // a message, not a stack trace
    }
  });
});
