// A scenario channel's gain and noise budget travel into the recording's metadata, and `analyze --input-referred`
// sets the budget's quadrature sum against the measured density near 1 kHz. The simulated terms are the budget's
// own, so the two agree within the estimate's scatter; the Johnson term is checked against √(4kTR) in numpy.
import { spawnSync } from 'node:child_process';
import { readFileSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { Python, root, tempDir } from '../wav/support.ts';
import { runCli } from '../analyze/support.ts';

let py: Python;
let dir: string;

beforeAll(() => {
  py = new Python();
  dir = tempDir('measure-budget');
});
afterAll(() => py.close());

describe('noise budget from the metadata', () => {
  it('is recorded by the simulator and compared by analyze --input-referred (±1 dB at 1 kHz)', async () => {
    // 1 kΩ source at 300 K (4.07 nV/√Hz), amplifier 3 nV/√Hz and 1 pA/√Hz (1 nV/√Hz through 1 kΩ), gain 50:
    // at the converter 203.6, 150 and 50 nV/√Hz.
    const scenario = {
      rate: 8000,
      format: 'int24',
      duration: 20,
      seed: 3,
      channels: [
        {
          name: 'amp',
          unit: 'V',
          perCount: 2.98e-7,
          gain: 50,
          budget: { sourceOhms: 1000, kelvin: 300, amplifierDensity: 3e-9, amplifierCurrent: 1e-12 },
          signals: [
            { kind: 'white', density: 203.6e-9 },
            { kind: 'white', density: 150e-9 },
            { kind: 'white', density: 50e-9 },
          ],
        },
      ],
    };
    const sc = join(dir, 'amp.json');
    writeFileSync(sc, JSON.stringify(scenario));
    const wav = join(dir, 'amp.wav');
    const sim = spawnSync(process.execPath, [join(root, 'bin/floorline.mjs'), 'simulate', sc, '--out', wav], {
      encoding: 'utf8',
    });
    expect(sim.status, sim.stderr).toBe(0);
    const meta = JSON.parse(readFileSync(`${wav}.json`, 'utf8'));
    expect(meta.channels[0]).toMatchObject({
      gain: 50,
      budget: { sourceOhms: 1000, kelvin: 300, amplifierDensity: 3e-9, amplifierCurrent: 1e-12 },
    });
    const r = runCli('analyze', wav, '--input-referred', '--json');
    expect(r.status, r.stderr).toBe(0);
    const b = JSON.parse(r.stdout).channels[0].budget;
    const johnson = await py.run<number>('result = float(np.sqrt(4 * 1.380649e-23 * 300 * 1000))'); // √(4kTR), k exact (2019 SI)
    expect(b.parts[0].density).toBeCloseTo(johnson, 15);
    expect(b.parts[2].density).toBeCloseTo(1e-9, 15); // iₙ·R
    expect(b.parts[3].density).toBeCloseTo(2.98e-7 / Math.sqrt(6 * 8000) / 50, 15); // q/√(6·fs) ÷ gain (common practice)
    expect(b.total).toBeCloseTo(Math.sqrt(johnson ** 2 + 3e-9 ** 2 + 1e-9 ** 2 + b.parts[3].density ** 2), 15);
    expect(b.referredTo).toBe('input');
    expect(Math.abs(b.differenceDb)).toBeLessThan(1);
    // At the ADC (no --input-referred) the same budget × gain, the same difference.
    const adc = JSON.parse(runCli('analyze', wav, '--json').stdout).channels[0].budget;
    expect(adc.total / b.total).toBeCloseTo(50, 9);
    expect(adc.differenceDb).toBeCloseTo(b.differenceDb, 9);
    const text = runCli('analyze', wav, '--input-referred').stdout;
    expect(text).toMatch(
      /noise budget \(metadata\) +5\.[0-9]+ nV\/√Hz \(input\) = √\(source R \(Johnson\) 4\.07 n² \+ amplifier eₙ 3\.00 n² \+ amplifier iₙ·R 1\.00 n² \+ ADC quantisation/,
    );
    expect(text).toMatch(/measured near 1000 Hz +5\.[0-9]+ nV\/√Hz \(input\): [+-][0-9.]+ dB against the budget/);
  });
});
