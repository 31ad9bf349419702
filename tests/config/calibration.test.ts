// Per-channel calibration from a rig config: the demo rig's bridge channel (gain 100, input-referred) must read the
// scripted floor at the amplifier input, the recording must carry the calibration, and replaying the recording
// must reproduce the same spectra in the same units.
import { spawnSync } from 'node:child_process';
import { mkdtempSync, readdirSync, readFileSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { DEMO_WAV, floorline } from '../support/cli.ts';

function succeeds(args: string[]): { stdout: string; stderr: string } {
  const r = floorline(args);
  expect(r.status, r.stderr).toBe(0);
  return r;
}
const digest = (out: string): string => /digest ([0-9a-f]+)/.exec(out)![1];

describe('calibration from the rig config', () => {
  it('input-referred bridge reads the scripted input floor; a replay of its recording reproduces the units', () => {
    const dir = mkdtempSync(join(tmpdir(), 'fl-cal-'));
    const config = join(dir, 'rig.json');
    writeFileSync(
      config,
      JSON.stringify({
        channels: [
          { name: 'bridge', unit: 'V', gain: 100, inputReferred: true },
          { name: 'shorted', unit: 'V' },
        ],
        data: 'data',
      }),
    );
    const first = succeeds([
      'replay',
      DEMO_WAV,
      '--config',
      config,
      '--speed',
      'max',
      '--no-server',
      '--quiet',
      '--record',
    ]);
    const recDir = join(dir, 'data/recordings');
    const rec = join(
      recDir,
      readdirSync(recDir).find((f) => f.startsWith('rec-') && f.endsWith('.wav'))!,
    );
    const side = JSON.parse(readFileSync(`${rec}.json`, 'utf8'));
    expect(side.channels[0]).toMatchObject({
      name: 'bridge',
      gain: 100,
      calibration: { gain: 100, inputReferred: true },
    });

    // scipy.signal.welch on the recorded float32 samples of the quiet span (0–18 s): the white floor between 1 and
    // 3 kHz. The scenario scripts the bridge's budget at the amplifier input (recordings/README.md): √(4kTR) of 350 Ω
    // at 296 K, 6 nV/√Hz and 0.2 pA/√Hz × 350 Ω in quadrature = 6.46 nV/√Hz (plus the board's 15 nV/√Hz ÷ 100, 0.003
    // dB); the shorted input keeps its 15 nV/√Hz.
    const py = spawnSync(
      'python3',
      [
        '-c',
        `
import sys, numpy as np, scipy.io.wavfile as w, scipy.signal as s
fs, x = w.read(sys.argv[1]); x = x[:18*fs].astype(np.float64)
f, p = s.welch(x, fs=fs, nperseg=4096, axis=0)
sel = (f >= 1000) & (f <= 3000)
print(np.sqrt(np.median(p[sel, 0])), np.sqrt(np.median(p[sel, 1])))
`,
        rec,
      ],
      { encoding: 'utf8' },
    );
    expect(py.status, py.stderr).toBe(0);
    const [bridge, shorted] = py.stdout.trim().split(/\s+/).map(Number);
    // Each bin averages ~70 segments, so the median over bins sits within a few % of the density; allow ±10 %.
    const budget = Math.sqrt(4 * 1.380649e-23 * 296 * 350 + 6e-9 ** 2 + (0.2e-12 * 350) ** 2);
    expect(bridge / budget).toBeGreaterThan(0.9);
    expect(bridge / budget).toBeLessThan(1.1);
    expect(shorted / 15e-9).toBeGreaterThan(0.9);
    expect(shorted / 15e-9).toBeLessThan(1.1);

    // Replays of the recording, with and without the config, give the first run's spectra bit for bit.
    const again = succeeds([
      'replay',
      rec,
      '--config',
      config,
      '--speed',
      'max',
      '--no-server',
      '--quiet',
      '--data',
      join(dir, 'd2'),
    ]);
    const bare = succeeds(['replay', rec, '--speed', 'max', '--no-server', '--quiet', '--data', join(dir, 'd3')]);
    expect(digest(again.stdout)).toBe(digest(first.stdout));
    expect(digest(bare.stdout)).toBe(digest(first.stdout));
    // And they differ from the uncalibrated demo (so the digest does see the calibration).
    const plain = succeeds(['replay', DEMO_WAV, '--speed', 'max', '--no-server', '--quiet', '--data', join(dir, 'd4')]);
    expect(digest(plain.stdout)).not.toBe(digest(first.stdout));
    // A baseline of the calibrated recording says its bridge densities are at the input, so no replay divides them
    // by the gain again; the shorted channel (no gain) carries no mark.
    succeeds(['baseline', rec, '-o', join(dir, 'input-baseline.json'), '--seconds', '8']);
    const marked = JSON.parse(readFileSync(join(dir, 'input-baseline.json'), 'utf8'));
    expect(marked.channels[0].referredTo).toBe('input');
    expect(marked.channels[1].referredTo).toBeUndefined();
  }, 180_000);
});
