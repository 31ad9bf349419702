// The masks message: what the agent sends for each channel (its own mask, else the one for every channel; the
// unit of the file or of the channel; the point the rule compares at) and the strict check both ends run.
// References: the mask CSV format (frequency,limit[,unit], SI prefixes per SI Brochure, 9th ed.) and numpy.
import { describe, expect, it } from 'vitest';
import { execFileSync } from 'node:child_process';
import { limitMasksProblem, type ChannelLimitMask } from '../../protocol/limit-masks.ts';
import { limitMasksMessage } from '../../agent/server/channel-masks.ts';
import { parseMaskCsv } from '../../agent/analysis/mask-file.ts';
import { maskOnBins } from '../../dsp/measure/limit-mask.ts';
import type { StreamInfo } from '../../protocol/stream.ts';

const good: ChannelLimitMask = {
  channel: 'bridge',
  unit: 'V',
  referredTo: 'adc',
  frequency: [10, 100, 1000],
  limit: [2e-6, 1e-6, 1e-6],
  file: 'spec.csv',
};
const msg = (masks: unknown[]) => ({ type: 'masks', masks });

describe('limitMasksProblem', () => {
  it('accepts a valid message and an empty one', () => {
    expect(limitMasksProblem(msg([good]))).toBeNull();
    expect(limitMasksProblem(msg([]))).toBeNull();
  });

  it('refuses each malformed part, naming it', () => {
    expect(limitMasksProblem(msg([{ ...good, colour: 'red' }]))).toMatch(/masks\[0\]\.colour is not a known key/);
    expect(limitMasksProblem(msg([{ ...good, frequency: [10, 10, 1000] }]))).toMatch(/frequency\[1\] must be above/);
    expect(limitMasksProblem(msg([{ ...good, limit: [2e-6, -1, 1e-6] }]))).toMatch(/limit\[1\] must be above 0/);
    expect(limitMasksProblem(msg([{ ...good, limit: [1e-6] }]))).toMatch(/one number per frequency/);
    expect(limitMasksProblem(msg([{ ...good, frequency: [0, 100, 1000] }]))).toMatch(/frequency\[0\] must be above 0/);
    expect(limitMasksProblem(msg([{ ...good, referredTo: 'output' }]))).toMatch(/referredTo/);
    expect(limitMasksProblem(msg([{ ...good, file: '../etc/passwd' }]))).toMatch(/without folders/);
    expect(limitMasksProblem(msg([good, good]))).toMatch(/has a mask already/);
    expect(limitMasksProblem(msg([{ ...good, channel: 'a\u001b[2J' }]))).toMatch(/channel must be a name/);
    expect(limitMasksProblem({ type: 'masks', masks: [], extra: 1 })).toMatch(/extra is not a known key/);
    expect(limitMasksProblem({ type: 'context', masks: [] })).toMatch(/type 'masks'/);
  });
});

describe('limitMasksMessage (agent side)', () => {
  const info = (inputReferred: boolean): StreamInfo =>
    ({
      sampleRate: 8000,
      channels: [
        {
          name: 'bridge',
          unit: 'V',
          scale: 1,
          fullScaleCounts: 2.5,
          ...(inputReferred ? { calibration: { unit: 'V', gain: 100, inputReferred: true } } : {}),
        },
        { name: 'shorted', unit: 'V', scale: 1, fullScaleCounts: 2.5 },
        { name: 'spare', unit: 'A', scale: 1, fullScaleCounts: Infinity },
      ],
    }) as unknown as StreamInfo;
  const every = parseMaskCsv('frequency,limit,unit\n1,30,nV/√Hz\n1000,10,nV/√Hz\n', '/x/all.csv', 4000);
  const own = parseMaskCsv('frequency,limit\n5,2e-6\n2000,1e-6\n', '/x/bridge.csv', 4000);

  it("gives each channel its own mask, else the '*' one, in the file's unit (nV → V by the SI prefix) or the channel's", () => {
    const r = limitMasksMessage(info(false), { bridge: own, '*': every });
    if (!('message' in r)) throw new Error(r.problem);
    expect(r.message.masks.map((m) => [m.channel, m.file, m.unit])).toEqual([
      ['bridge', 'bridge.csv', 'V'],
      ['shorted', 'all.csv', 'V'],
      ['spare', 'all.csv', 'V'],
    ]);
    r.message.masks[1].limit.forEach((v, i) => expect(v).toBeCloseTo([30e-9, 10e-9][i], 22));
    expect(r.message.masks[0].referredTo).toBe('adc');
    expect(limitMasksProblem(r.message)).toBeNull();
  });

  it('refers a mask to the amplifier input when the rig config divided the samples by the gain', () => {
    const r = limitMasksMessage(info(true), { bridge: own });
    if (!('message' in r)) throw new Error(r.problem);
    expect(r.message.masks).toHaveLength(1);
    expect(r.message.masks[0].referredTo).toBe('input');
  });

  it('sends no masks when none are given', () => {
    const r = limitMasksMessage(info(false), undefined);
    expect('message' in r && r.message.masks).toEqual([]);
  });

  it('the points the page draws between are the rule’s: maskOnBins equals numpy.interp of log L on log f', () => {
    const r = limitMasksMessage(info(false), { '*': every });
    if (!('message' in r)) throw new Error(r.problem);
    const m = r.message.masks[0];
    const bins = Float64Array.from({ length: 600 }, (_v, i) => i * 1.953125);
    const got = maskOnBins({ frequency: Float64Array.from(m.frequency), limit: Float64Array.from(m.limit) }, bins);
    const ref = JSON.parse(
      execFileSync(
        'python3',
        [
          '-c',
          `import json, sys, numpy as np
d = json.load(sys.stdin)
x, f, l = np.array(d['x']), np.array(d['f']), np.array(d['l'])
with np.errstate(divide='ignore'):
    y = np.exp(np.interp(np.log(x), np.log(f), np.log(l)))
y[(x < f[0]) | (x > f[-1])] = np.nan
print(json.dumps([None if np.isnan(v) else float(v) for v in y]))`,
        ],
        { input: JSON.stringify({ x: Array.from(bins), f: m.frequency, l: m.limit }) },
      ).toString(),
    ) as (number | null)[];
    let n = 0;
    for (let i = 0; i < bins.length; i++) {
      if (ref[i] === null) expect(got[i]).toBeNaN();
      else {
        n++;
        expect(Math.abs(got[i] / ref[i]! - 1)).toBeLessThan(1e-12);
      }
    }
    expect(n).toBeGreaterThan(500);
  });
});
