// WelchEstimator against scipy.signal.welch on the same samples (fixtures from
// tests/fixtures/make_welch_fixtures.py: scipy.signal.welch(x, fs, window, nperseg, noverlap, detrend, scaling,
// average, axis=-1)). Float64 input: relative error ≤ 1e-9 on every bin above 1e-12 of the channel's peak.
import { readFileSync } from 'node:fs';
import { describe, expect, it } from 'vitest';
import type { AveragingSpec, DetrendMode } from '../../protocol/settings.ts';
import { WelchEstimator, type Scaling } from '../../dsp/welch.ts';
import { makeWindow } from '../../dsp/windows.ts';

interface Case {
  window: string;
  segment: number;
  overlap: number;
  noverlap: number;
  detrend: DetrendMode;
  scaling: Scaling;
  average: 'mean' | 'median';
  float32: boolean;
  segments: number;
  psd: number[][];
}
interface Fixture {
  sample_rate: number;
  channels: number;
  samples: number;
  windows_256: Record<string, number[]>;
  cases: Case[];
}

const dir = new URL('../fixtures/welch/', import.meta.url);
const fixture = JSON.parse(readFileSync(new URL('cases.json', dir), 'utf8')) as Fixture;
const raw = readFileSync(new URL('input.bin', dir));
const all = new Float64Array(raw.buffer.slice(raw.byteOffset, raw.byteOffset + raw.byteLength));
const channel = (c: number): Float64Array => all.subarray(c * fixture.samples, (c + 1) * fixture.samples);

function worstRelativeError(ours: Float64Array, ref: number[]): number {
  let peak = 0;
  for (const v of ref) peak = Math.max(peak, v);
  let worst = 0;
  for (let k = 0; k < ref.length; k++) {
    if (ref[k] <= 1e-12 * peak) continue;
    worst = Math.max(worst, Math.abs(ours[k] - ref[k]) / ref[k]);
  }
  return worst;
}

describe('WelchEstimator matches scipy.signal.welch', () => {
  it('builds every window sample for sample as scipy.signal.get_window / Heinzel 2002 coefficients', () => {
    for (const [name, ref] of Object.entries(fixture.windows_256)) {
      const w = makeWindow(name, 256).values;
      let worst = 0;
      for (let i = 0; i < 256; i++) worst = Math.max(worst, Math.abs(w[i] - ref[i]));
      expect(worst, name).toBeLessThan(1e-12);
    }
  });

  for (const c of fixture.cases) {
    const label = `${c.window} N=${c.segment} overlap=${c.overlap.toFixed(3)} detrend=${c.detrend} ${c.scaling} ${c.average}${c.float32 ? ' float32' : ''}`;
    it(`agrees within 1e-9 for ${label}`, () => {
      for (let ch = 0; ch < fixture.channels; ch++) {
        const averaging: AveragingSpec =
          c.average === 'median' ? { mode: 'median', count: c.segments } : { mode: 'mean' };
        const est = new WelchEstimator({
          sampleRate: fixture.sample_rate,
          segment: c.segment,
          window: c.window,
          overlap: c.overlap,
          detrend: c.detrend,
          scaling: c.scaling,
          averaging,
        });
        expect(est.noverlap).toBe(c.noverlap); // scipy: noverlap = int(floor(overlap*nperseg)) in the script
        const x = channel(ch);
        est.push(c.float32 ? Float32Array.from(x) : x);
        expect(est.segmentsUsed).toBe(c.segments);
        const psd = est.psd();
        expect(psd.length).toBe(c.psd[ch].length);
        expect(worstRelativeError(psd, c.psd[ch]), `channel ${ch}`).toBeLessThan(1e-9);
      }
    });
  }
});
