// The agent's live low-frequency view (agent/lowfreq/live-low-frequency.ts): updates at sample instants, the
// 1/f fit on noise of a known spectrum made by numpy, and the 0.1–10 Hz figures against scipy.signal.sosfilt.
import { describe, expect, it } from 'vitest';
import { LiveLowFrequency } from '../../agent/lowfreq/live-low-frequency.ts';
import type { LowFrequencyUpdate } from '../../protocol/low-frequency-messages.ts';
import { runPython } from '../logfreq/python.ts';

const FS = 1000;

/** Noise with one-sided density e_w²·(1 + f_c/f): numpy white noise (σ² = e_w²·fs/2) shaped in the rfft domain. */
function shapedNoise(seed: number, seconds: number, ew: number, fc: number): Float64Array {
  return runPython<{ x: Float64Array }>(
    `
rng = np.random.default_rng(int(inp['seed']))
n = int(inp['n']); fs = inp['fs']
w = rng.standard_normal(n) * inp['ew'] * np.sqrt(fs / 2)
f = np.fft.rfftfreq(n, 1 / fs); g = np.zeros_like(f); g[1:] = np.sqrt(1 + inp['fc'] / f[1:])
out['x'] = np.fft.irfft(np.fft.rfft(w) * g, n)
`,
    { seed, n: seconds * FS, fs: FS, ew, fc },
  ).x;
}

function run(
  view: LiveLowFrequency,
  x: Float64Array[],
  blockSizes: (i: number) => number,
  first = 0,
): LowFrequencyUpdate[] {
  const out: LowFrequencyUpdate[] = [];
  const off = view.onUpdate((u) => out.push(JSON.parse(JSON.stringify(u)) as LowFrequencyUpdate));
  for (let at = 0, i = 0; at < x[0].length; i++) {
    const n = Math.min(x[0].length - at, blockSizes(i));
    view.block(
      first + at,
      n,
      x.map((c) => c.subarray(at, at + n)),
    );
    at += n;
  }
  off();
  return out;
}

describe('LiveLowFrequency (agent view)', () => {
  const ew = 20e-9;
  const fc = 5;
  const x = [shapedNoise(5, 120, ew, fc), shapedNoise(6, 120, 2 * ew, 0.5 * fc)];

  it('publishes at the samples s with (s + 1) mod (fs / rate) = 0 and gives identical updates for any block split', () => {
    const a = new LiveLowFrequency({ updatesPerSecond: 2 });
    a.start(FS, [
      { name: 'a', unit: 'V' },
      { name: 'b', unit: 'V' },
    ]);
    const ua = run(a, x, () => 4096);
    const b = new LiveLowFrequency({ updatesPerSecond: 2 });
    b.start(FS, [
      { name: 'a', unit: 'V' },
      { name: 'b', unit: 'V' },
    ]);
    const ub = run(b, x, (i) => ((i * 7919) % 1500) + 1);
    expect(ua.length).toBe(240); // 120 s × 2 per second
    expect(ua.map((u) => u.sample)).toEqual(Array.from({ length: 240 }, (_, k) => 500 * (k + 1) - 1));
    expect(ua[239].t).toBeCloseTo(119.999, 9); // t = sample / fs
    expect(ub).toEqual(ua);
  });

  it('fits e_w, f_c and α of numpy-shaped 1/f + white noise within 3σ of the values it was made with', () => {
    const view = new LiveLowFrequency({ spanSeconds: 120 });
    view.start(FS, [
      { name: 'a', unit: 'V' },
      { name: 'b', unit: 'V' },
    ]);
    run(view, x, () => 1000);
    const truth = [
      { ew, fc },
      { ew: 2 * ew, fc: 0.5 * fc },
    ];
    for (const [c, st] of view.status().entries()) {
      const f = st.fit!;
      expect(f).not.toBeNull();
      expect(f.sample).toBe(120 * FS - 1);
      // Known by construction (numpy shaping above): density e_w²(1 + f_c/f), so α = 1.
      expect(Math.abs(f.whiteAsd - truth[c].ew)).toBeLessThan(3 * f.whiteAsdSigma);
      expect(Math.abs(f.corner - truth[c].fc)).toBeLessThan(3 * f.cornerSigma);
      if (f.exponentFree) expect(Math.abs(f.exponent - 1)).toBeLessThan(3 * f.exponentSigma);
      expect(f.cornerSigma / f.corner).toBeLessThan(0.25); // a usable fit, not one that passes on huge error bars
      expect(f.excludedPoints).toBeLessThanOrEqual(1); // plain noise: (almost) nothing is clipped as a line
    }
  });

  it('leaves mains lines out of the fit (one-sided 4σ clipping) and still finds the floor the noise was made with', () => {
    const y = Float64Array.from(x[0]);
    // Mains pickup of our invented rig: 50 Hz and harmonics, 0.5–2 µV rms, far above a 20 nV/√Hz floor.
    const lines: [number, number][] = [
      [50, 2e-6],
      [100, 0.5e-6],
      [150, 1e-6],
      [250, 0.5e-6],
    ];
    for (let i = 0; i < y.length; i++)
      for (const [f, rms] of lines) y[i] += rms * Math.SQRT2 * Math.sin((2 * Math.PI * f * i) / FS + f);
    const view = new LiveLowFrequency({ spanSeconds: 120 });
    view.start(FS, [{ name: 'a', unit: 'V' }]);
    run(view, [y], () => 1000);
    const f = view.status()[0].fit!;
    expect(f.excludedPoints).toBeGreaterThan(3);
    // Known by construction (numpy shaping in shapedNoise): e_w = 20 nV/√Hz, f_c = 5 Hz, α = 1.
    expect(Math.abs(f.whiteAsd - ew)).toBeLessThan(3 * f.whiteAsdSigma);
    expect(Math.abs(f.corner - fc)).toBeLessThan(3 * f.cornerSigma);
  });

  it('reports the newest 0.1–10 Hz window equal to numpy on scipy.signal.sosfilt output started in steady state', () => {
    const view = new LiveLowFrequency();
    view.start(
      FS,
      [
        { name: 'a', unit: 'V' },
        { name: 'b', unit: 'V' },
      ],
      3000,
    );
    const ups = run(view, x, () => 777, 3000);
    const pp = ups[ups.length - 1].channels[0].peakToPeak!;
    const ctx = view.context()!;
    // Reference: scipy.signal.butter(2, 0.1, 'highpass') + butter(4, 10, 'lowpass') as SOS, sosfilt with
    // zi = sosfilt_zi · x[0] (the meter's steady start), np.ptp / RMS / 6.6·np.std over the window's samples.
    const ref = runPython<{ ptp: number; rms: number; g: number }>(
      `
from scipy.signal import butter, sosfilt, sosfilt_zi
fs = inp['fs']
sos = np.vstack([butter(2, 0.1, 'highpass', fs=fs, output='sos'), butter(4, 10, 'lowpass', fs=fs, output='sos')])
y, _ = sosfilt(sos, inp['x'], zi=sosfilt_zi(sos) * inp['x'][0])
s = y[int(inp['a']):int(inp['b']) + 1]
out['ptp'] = np.ptp(s); out['rms'] = np.sqrt(np.mean(s ** 2)); out['g'] = 6.6 * np.std(s)
`,
      { x: x[0], fs: FS, a: pp.startSample - 3000, b: pp.sample - 3000 },
    );
    expect(pp.sample - pp.startSample + 1).toBe(ctx.peakToPeak!.windowSeconds * FS);
    expect(pp.t).toBeCloseTo(pp.sample / FS, 12);
    expect(Math.abs(pp.peakToPeak - ref.ptp) / ref.ptp).toBeLessThan(1e-9);
    expect(Math.abs(pp.rms - ref.rms) / ref.rms).toBeLessThan(1e-9);
    expect(Math.abs(pp.gaussianPeakToPeak - ref.g) / ref.g).toBeLessThan(1e-9);
  });

  it('holds the density the numpy noise was shaped to inside its confidence band at about the stated level', () => {
    const view = new LiveLowFrequency({ spanSeconds: 120 });
    view.start(FS, [{ name: 'a', unit: 'V' }]);
    const ups = run(view, [x[0]], () => 2048);
    const ctx = view.context()!;
    const last = ups[ups.length - 1].channels[0];
    let inside = 0;
    let counted = 0;
    let narrowCounted = 0;
    let twiceInside = 0;
    for (let p = 0; p < ctx.frequency.length; p++) {
      if (last.asd[p] === null) continue;
      counted++;
      // True ASD by construction (numpy rfft shaping in shapedNoise): e_w·sqrt(1 + f_c/f).
      const truth = ew * Math.sqrt(1 + fc / ctx.frequency[p]);
      if (truth >= last.lower[p]! && truth <= last.upper[p]!) inside++;
      // The band must also be narrow enough to say something: with ≥ 10 averages (ν ≈ 20) the 95 % band reaches
      // at most ×1.45 in ASD above the estimate (sqrt(20 / scipy.stats.chi2.ppf(0.025, 20)) = 1.44), so a density
      // 6 dB (×2 in ASD) above the truth falls outside it.
      if (last.averages[p] >= 10) {
        narrowCounted++;
        if (2 * truth >= last.lower[p]! && 2 * truth <= last.upper[p]!) twiceInside++;
      }
    }
    expect(ctx.level).toBe(0.95);
    expect(counted).toBeGreaterThan(100);
    expect(inside / counted).toBeGreaterThan(0.85); // 95 % band; neighbouring points share samples, so allow scatter
    expect(narrowCounted).toBeGreaterThan(50);
    expect(twiceInside).toBe(0);
  });

  it('starts over at a replay seam: the second loop repeats the first loop’s updates at later sample indices', () => {
    const n = 30 * FS;
    const part = [x[0].subarray(0, n)];
    const view = new LiveLowFrequency({ fitEvery: 2 });
    view.start(FS, [{ name: 'a', unit: 'V' }]);
    const first = run(view, part, () => 3000);
    view.gap({ sample: n, lost: 0, reason: 'loop', restartsAt: 0 });
    const second = run(view, part, () => 1234, n);
    expect(second.length).toBe(first.length);
    for (let k = 0; k < first.length; k++) {
      expect(second[k].sample).toBe(first[k].sample + n);
      expect(second[k].channels[0].asd).toEqual(first[k].channels[0].asd);
      expect(second[k].channels[0].fit?.whiteAsd).toEqual(first[k].channels[0].fit?.whiteAsd);
      expect(second[k].channels[0].peakToPeak?.peakToPeak).toEqual(first[k].channels[0].peakToPeak?.peakToPeak);
    }
    expect(first.some((u) => u.channels[0].fit !== null)).toBe(true);
  });

  it('keeps averages over a real gap and restamps after it', () => {
    const view = new LiveLowFrequency();
    view.start(FS, [{ name: 'a', unit: 'V' }]);
    run(view, [x[0].subarray(0, 20 * FS)], () => 1000);
    const before = view.latest()!.channels[0].averages.reduce((s, v) => s + v, 0);
    const after = run(view, [x[0].subarray(20 * FS, 22 * FS)], () => 1000, 25 * FS); // 5 s lost: a block jump
    expect(after[0].sample).toBe(25 * FS + 499);
    expect(after[after.length - 1].channels[0].averages.reduce((s, v) => s + v, 0)).toBeGreaterThanOrEqual(before);
  });
});
