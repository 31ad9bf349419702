// `analyze --input-referred`: densities divided by the metadata gain (psd by gain², CSD by the product of the
// gains), labelled "(input)"; refused, naming the fix, when a channel has no gain. Checked against
// scipy.signal.welch on the same samples divided by the gain in numpy.
import { writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { Python, root, tempDir } from '../wav/support.ts';
import { runCli } from '../analyze/support.ts';

let py: Python;
let dir: string;

const WRITE = String.raw`
x = 1e-5 * np.random.default_rng(4).standard_normal((40000, 2))
wavfile.write(args[0], 8000, x.astype(np.float32))
r, y = wavfile.read(args[0])
result = [(signal.welch(y[:, c].astype(np.float64) / g, fs=r, nperseg=4096)[1]).tolist() for c, g in enumerate(args[1])]
`;

function sidecar(path: string, gains: (number | undefined)[]): void {
  const channels = gains.map((g, i) => ({
    name: ['amp', 'ref'][i],
    unit: 'V',
    ...(g !== undefined ? { gain: g } : {}),
  }));
  writeFileSync(
    `${path}.json`,
    JSON.stringify({ schema: 'floorline.recording/1', sampleRate: 8000, firstSample: 0, channels }),
  );
}

beforeAll(() => {
  py = new Python();
  dir = tempDir('measure-input');
});
afterAll(() => py.close());

describe('analyze --input-referred', () => {
  it('divides by the gain from the metadata: psd equal to scipy.signal.welch of x / gain, unit marked (input)', async () => {
    const path = join(dir, 'rig.wav');
    const ref = await py.run<number[][]>(WRITE, path, [100, 2]);
    sidecar(path, [100, 2]);
    const r = runCli('analyze', path, '--input-referred', '--json');
    expect(r.status, r.stderr).toBe(0);
    const report = JSON.parse(r.stdout) as {
      channels: { unit: string; referredTo: string; gain: number; psd: number[] }[];
    };
    for (let c = 0; c < 2; c++) {
      const ch = report.channels[c];
      expect(ch.referredTo).toBe('input');
      expect(ch.gain).toBe([100, 2][c]);
      let worst = 0;
      for (let k = 0; k < ch.psd.length; k++) worst = Math.max(worst, Math.abs(ch.psd[k] - ref[c][k]) / ref[c][k]);
      expect(worst).toBeLessThan(1e-9);
    }
    const adc = JSON.parse(runCli('analyze', path, '--json').stdout) as {
      channels: { referredTo: string; psd: number[] }[];
    };
    expect(adc.channels[0].referredTo).toBe('adc');
    expect(adc.channels[0].psd[100] / report.channels[0].psd[100]).toBeCloseTo(1e4, 6);
    const text = runCli('analyze', path, '--input-referred');
    expect(text.stdout).toMatch(/amp \[V \(input\), gain 100 removed\]/);
    expect(text.stdout).toMatch(/floor density \(median ASD\) +[0-9.]+ [nµp]V\/√Hz \(input\)/);
    const csv = runCli('analyze', path, '--input-referred', '--csv');
    expect(csv.stdout).toMatch(/\nHz,V²\/Hz \(input\),V\/√Hz \(input\),/);
  });

  it('refuses a channel without a gain, naming the channel and the fix', async () => {
    const path = join(dir, 'nogain.wav');
    await py.run(WRITE, path, [1, 1]);
    sidecar(path, [100, undefined]);
    const r = runCli('analyze', path, '--input-referred');
    expect(r.status).toBe(2);
    expect(r.stderr).toMatch(
      /channel ref of .*nogain\.wav has no positive "gain" in its metadata; add "gain" \(V\/V ahead of the ADC\) to channels\[1\]/,
    );
  });

  it('gives the floor at the ADC in dBFS/√Hz (re a full-scale sine, AES17) and LSB/√Hz where full scale is known', () => {
    const demo = join(root, 'recordings/demo.wav');
    const j = JSON.parse(runCli('analyze', demo, '--exclude-clipped', '--json').stdout) as {
      channels: { asd: number[]; fullScale: number; lsb: number }[];
    };
    const ch = j.channels[1];
    // recordings/demo.wav.json: 8388607 counts full scale at 2.98e-7 V per count.
    expect(ch.lsb).toBe(2.98e-7);
    expect(ch.fullScale).toBeCloseTo(8388607 * 2.98e-7, 12);
    const sorted = ch.asd.slice(1).sort((a, b) => a - b);
    const floor = (sorted[(sorted.length >> 1) - 1] + sorted[sorted.length >> 1]) / 2;
    const text = runCli('analyze', demo, '--exclude-clipped').stdout;
    const m = /shorted \[V\][^]*?at the ADC +(-[0-9.]+) dBFS\/√Hz, ([0-9.]+) LSB\/√Hz/.exec(text);
    expect(m, text).not.toBeNull();
    expect(Number(m![1])).toBeCloseTo(20 * Math.log10((floor * Math.SQRT2) / ch.fullScale), 1); // AES17: 0 dBFS = full-scale sine
    expect(Number(m![2]) / (floor / ch.lsb)).toBeCloseTo(1, 2);
  });
});
