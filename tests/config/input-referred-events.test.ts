// Events of an input-referred channel say so: the demo replayed with a config that divides the bridge by its gain
// (100, recordings/README.md) gives the same alarms at the same samples, the bridge's line amplitudes ÷ 100 and
// marked `referredTo: "input"` in field and text, and the shorted channel's events unchanged and unmarked.
import { mkdtempSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import type { FloorlineEvent } from '../../protocol/events.ts';
import { rescaleBaselineForReplay } from '../../agent/config/calibration.ts';
import { readBaseline } from '../../agent/baseline/format.ts';
import { DEMO_BASELINE, DEMO_WAV, floorline, headlessAgainstDemoBaseline, readJsonLines } from '../support/cli.ts';

/** The demo replayed against its baseline: the events it wrote, and what it printed. */
function replayEvents(dir: string, extra: string[]): { events: FloorlineEvent[]; stdout: string } {
  const out = join(dir, 'events.jsonl');
  const r = floorline([
    'replay',
    DEMO_WAV,
    '--speed',
    'max',
    ...headlessAgainstDemoBaseline(out),
    '--data',
    join(dir, 'data'),
    ...extra,
  ]);
  expect(r.status, r.stderr).toBe(0);
  return { events: readJsonLines<FloorlineEvent>(out), stdout: r.stdout };
}

describe('events of an input-referred channel', () => {
  it('quote line amplitudes at the amplifier input and say so; other channels are untouched', () => {
    const dir = mkdtempSync(join(tmpdir(), 'fl-input-events-'));
    const config = join(dir, 'rig.json');
    writeFileSync(
      config,
      JSON.stringify({
        channels: [
          { name: 'bridge', unit: 'V', gain: 100, inputReferred: true },
          { name: 'shorted', unit: 'V' },
        ],
      }),
    );
    const adc = replayEvents(join(dir, 'adc'), []);
    const input = replayEvents(join(dir, 'input'), ['--config', config]);
    // The baseline was taken at the converter: with the config it is divided by the gain once (1/100), and said so.
    expect(adc.stdout).not.toMatch(/baseline brought into/);
    expect(input.stdout.match(/^floorline replay: baseline brought into the config's units: .*$/gm)).toEqual([
      "floorline replay: baseline brought into the config's units: bridge → bridge (×0.01)",
    ]);
    const atAdc = adc.events.filter((e) => e.kind === 'alarm');
    const atInput = input.events.filter((e) => e.kind === 'alarm');
    // The same alarms at the same samples: dB levels are ratios, so referring to the input changes none of them.
    expect(atInput.map((e) => [e.rule, e.state, e.channel, e.sample, e.levelDb])).toEqual(
      atAdc.map((e) => [e.rule, e.state, e.channel, e.sample, e.levelDb]),
    );
    let lines = 0;
    for (let i = 0; i < atAdc.length; i++) {
      const a = atAdc[i];
      const b = atInput[i];
      expect(a.referredTo).toBeUndefined();
      if (b.channel === 'bridge') {
        expect(b.referredTo).toBe('input');
        if (a.amplitude !== undefined) {
          lines++;
          // Amplitudes are kept to 4 significant digits: the ratio holds to about 1e-3.
          expect(Math.abs((100 * b.amplitude!) / a.amplitude - 1)).toBeLessThan(1.5e-3);
          expect(b.detail).toMatch(/amplitudes referred to the input: the converter reads 100× these/);
        }
      } else {
        expect(b.referredTo).toBeUndefined();
        expect(b.amplitude).toBe(a.amplitude);
        expect(b.detail).toBe(a.detail);
      }
    }
    expect(lines).toBeGreaterThanOrEqual(4); // the mains harmonics on the bridge, raised and settled
  }, 150_000);

  it('bring a converter-side baseline to the input once, and never divide a baseline taken at the input again', async () => {
    // A density scales with the square of the amplitude, a band RMS with the amplitude (common practice).
    const base = await readBaseline(DEMO_BASELINE);
    const config = [
      { name: 'bridge', unit: 'V', gain: 100, inputReferred: true },
      { name: 'shorted', unit: 'V' },
    ];
    const once = rescaleBaselineForReplay(base, config);
    expect(once.changed).toEqual(['bridge → bridge (×0.01)']);
    const [b0, b1] = [base.channels[0], once.baseline.channels[0]];
    expect(b1.referredTo).toBe('input');
    for (const k of [1, 100, 1000]) expect(b1.psd[k]).toBeCloseTo(b0.psd[k] / 1e4, 30);
    expect(b1.bands[0].rms / b0.bands[0].rms).toBeCloseTo(0.01, 12);
    expect(once.baseline.channels[1]).toBe(base.channels[1]);
    const twice = rescaleBaselineForReplay(once.baseline, config);
    expect(twice.changed).toEqual([]);
    expect(twice.baseline.channels[0].psd).toEqual(b1.psd);
    // A recording that carries its own calibration: the config is not applied to it, nor to its baseline.
    expect(rescaleBaselineForReplay(base, config, new Set([0])).changed).toEqual([]);
  });
});
