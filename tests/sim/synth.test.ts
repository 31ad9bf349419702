import { describe, expect, it } from 'vitest';
import { BandStep } from '../../dsp/synth/band-step.ts';
import { FlickerNoise } from '../../dsp/synth/flicker-noise.ts';
import { MainsPickup } from '../../dsp/synth/mains.ts';
import { Overload } from '../../dsp/synth/overload.ts';
import { quantise } from '../../dsp/synth/quantise.ts';
import { Tone } from '../../dsp/synth/tone.ts';
import { WhiteNoise } from '../../dsp/synth/white-noise.ts';
import type { SynthComponent } from '../../dsp/synth/component.ts';
import { runPython } from '../framing/run-python.ts';

function render(c: SynthComponent, n: number, block = 1000): Float64Array {
  const out = new Float64Array(n);
  for (let p = 0; p < n; p += block) c.addTo(out, p, Math.min(block, n - p));
  return out;
}

function bytesOf(a: Float64Array): Uint8Array {
  return new Uint8Array(a.buffer, a.byteOffset, a.byteLength);
}

/** scipy.signal.welch of the samples; returns python's printout of `expr` evaluated with f, p in scope. */
function welch(x: Float64Array, fs: number, opts: string, expr: string): number[] {
  const script = `
import sys, json, numpy as np
from scipy.signal import welch
x = np.frombuffer(sys.stdin.buffer.read(), dtype='<f8')
f, p = welch(x, fs=${fs}, ${opts})
print(json.dumps([float(v) for v in (${expr})]))`;
  return JSON.parse(runPython(script, bytesOf(x))) as number[];
}

const dB = (ratio: number): number => 10 * Math.log10(ratio);

describe('dsp/synth generators, measured with scipy.signal.welch', () => {
  it('WhiteNoise has the requested one-sided density', () => {
    const fs = 10000;
    const D = 10e-9;
    const x = render(new WhiteNoise({ density: D, sampleRate: fs, seed: 1 }), 1 << 20);
    // scipy.signal.welch(scaling='density') is one-sided: white noise of variance σ² reads 2σ²/fs = D².
    const [mean] = welch(x, fs, 'nperseg=4096', 'np.mean(p[10:-10]),');
    expect(Math.abs(dB(mean / (D * D)))).toBeLessThan(0.05);
  });

  it('FlickerNoise follows D²·fc/f within 0.5 dB from 1 Hz to fs/20', () => {
    const fs = 10000;
    const D = 20e-9;
    const fc = 100;
    const x = render(new FlickerNoise({ density: D, corner: fc, sampleRate: fs, seed: 2 }), 1 << 22, 4096);
    const freqs = [1, 3, 10, 30, 100, 300, 500];
    // Mean of psd·f over ±25 % around each frequency (flat for 1/f noise, so the band average is unbiased), from
    // scipy.signal.welch (Hann, 50 % overlap, 2^15 segments: 255 averages, ≥ 2 bins, ≈ 0.2 dB standard error at 1 Hz).
    const got = welch(
      x,
      fs,
      'nperseg=32768',
      `[np.mean((p*f)[(f > 0.75*g) & (f < 1.25*g)]) / g for g in ${JSON.stringify(freqs)}]`,
    );
    freqs.forEach((f, i) => {
      // Target density of 1/f noise with corner fc: D²·fc/f (our definition, PROTOCOL of the scenario file).
      expect(Math.abs(dB(got[i] / ((D * D * fc) / f)))).toBeLessThan(0.5);
    });
  });

  it('Tone has the requested RMS (flat-top spectrum peak, scipy scaling="spectrum")', () => {
    const fs = 20000;
    const x = render(new Tone({ frequency: 1234.5, rms: 3e-6, sampleRate: fs, phaseDeg: 30 }), 1 << 18, 777);
    // scipy.signal.welch(window='flattop', scaling='spectrum') reads a line's power (RMS²) to ~0.01 dB.
    const [peak] = welch(x, fs, "window='flattop', nperseg=8192, scaling='spectrum'", 'np.max(p),');
    expect(Math.sqrt(peak) / 3e-6).toBeCloseTo(1, 3);
  });

  it('MainsPickup puts each harmonic at its RMS, and its drifting fundamental reaches f0 + span', () => {
    const fs = 5000;
    const harmonics = [2e-6, 0.5e-6, 1e-6];
    const x = render(new MainsPickup({ fundamental: 50, harmonics, sampleRate: fs }), 1 << 18);
    const lines = welch(
      x,
      fs,
      "window='flattop', nperseg=16384, scaling='spectrum'",
      '[np.max(p[(f > 48*k) & (f < 52*k)]) for k in (1, 2, 3)]',
    );
    // Flat-top scalloping loss is below 0.02 dB (Heinzel, Rüdiger & Schilling 2002, Table): 0.5 % on amplitude is ample.
    harmonics.forEach((h, k) => expect(Math.sqrt(lines[k]) / h).toBeCloseTo(1, 2));

    // Drift: f(t) = 50 + 0.4·sin(2πt/20) peaks at t = 5 s. Count rising zero crossings over 4.5..5.5 s with numpy.
    const drift = new MainsPickup({ fundamental: 50, harmonics: [1], sampleRate: fs, driftSpan: 0.4, driftPeriod: 20 });
    const y = render(drift, 6 * fs);
    const [freq] = JSON.parse(
      runPython(
        `
import sys, json, numpy as np
y = np.frombuffer(sys.stdin.buffer.read(), dtype='<f8')[int(4.5*${fs}):int(5.5*${fs})]
z = np.nonzero((y[:-1] < 0) & (y[1:] >= 0))[0]
frac = z + y[z] / (y[z] - y[z+1])          # linear interpolation of each crossing
print(json.dumps([float((len(frac) - 1) / ((frac[-1] - frac[0]) / ${fs}))]))`,
        bytesOf(y),
      ),
    ) as number[];
    // Mean of 50 + 0.4 sin over ±0.5 s around the crest: 50 + 0.4·sinc-average = 50 + 0.4·(sin(π/20)/(π/20)) ≈ 50.3984.
    expect(freq).toBeCloseTo(50 + 0.4 * (Math.sin(Math.PI / 20) / (Math.PI / 20)), 3);
  });

  it('BandStep adds D·√(high−low) of band RMS only inside [start, end)', () => {
    const fs = 8000;
    const D = 50e-9;
    const step = new BandStep({ density: D, low: 200, high: 1200, start: 1, end: 31, sampleRate: fs, seed: 3 });
    const x = render(step, 32 * fs);
    expect(x.subarray(0, fs).every((v) => v === 0)).toBe(true);
    expect(x.subarray(31 * fs).every((v) => v === 0)).toBe(true);
    // Band RMS = sqrt(Σ psd·binHz) over 200 ≤ f ≤ 1200 (the band rule of docs/ARCHITECTURE.md), psd from scipy.signal.welch.
    const [rms] = welch(
      x.subarray(fs, 31 * fs),
      fs,
      'nperseg=4096',
      'np.sqrt(np.sum(p[(f >= 200) & (f <= 1200)]) * (f[1] - f[0])),',
    );
    expect(rms / (D * Math.sqrt(1000))).toBeGreaterThan(0.97);
    expect(rms / (D * Math.sqrt(1000))).toBeLessThan(1.03);
  });

  it('quantise rounds and saturates like numpy.clip(numpy.rint(v/lsb)), counting the clipped samples', () => {
    const fs = 1000;
    const lsb = 1e-3;
    const v = render(new Overload({ start: 0.1, end: 0.3, frequency: 37, peak: 0.05, sampleRate: fs }), fs);
    new WhiteNoise({ density: 1e-4, sampleRate: fs, seed: 4 }).addTo(v, 0, fs);
    const counts = new Float64Array(fs);
    const clipped = quantise(v, counts, fs, lsb, 32, true);
    const ref = JSON.parse(
      runPython(
        `
import sys, json, numpy as np
v = np.frombuffer(sys.stdin.buffer.read(), dtype='<f8')
q = np.rint(v * (1 / ${lsb}))
print(json.dumps([(np.clip(q, -32, 32) + 0.0).tolist(), int(np.sum(np.abs(q) > 32))]))  # + 0.0: one zero code, no -0`,
        bytesOf(v),
      ),
    ) as [number[], number];
    expect(Array.from(counts)).toEqual(ref[0]);
    expect(clipped).toBe(ref[1]);
    expect(clipped).toBeGreaterThan(50);
  });

  it('gives the same samples whatever the block size (the generators are sample-time driven)', () => {
    // Contract of SynthComponent: output depends on the absolute sample index only.
    const make = (): SynthComponent[] => [
      new WhiteNoise({ density: 1, sampleRate: 1000, seed: 5 }),
      new FlickerNoise({ density: 1, corner: 10, sampleRate: 1000, seed: 6, lowest: 0.1 }),
      new MainsPickup({ fundamental: 60, harmonics: [1, 0.3], sampleRate: 1000, driftSpan: 0.2, driftPeriod: 3 }),
      new BandStep({ density: 1, low: 10, high: 100, start: 0.5, end: 2, sampleRate: 1000, seed: 7 }),
    ];
    const a = make().map((c) => render(c, 3000, 3000));
    const b = make().map((c) => render(c, 3000, 7));
    expect(b).toEqual(a);
  });
});
