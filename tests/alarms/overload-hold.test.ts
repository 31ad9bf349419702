// Spectral alarms around an overload, through the real pipeline and detectors on seeded recordings (white floor
// from the seeded generator, a clipped sine switched on and off in sample time).
import { spawnSync } from 'node:child_process';
import { beforeAll, describe, expect, it } from 'vitest';
import { DEFAULT_BENCH, captureQuietBaseline, runScenario, type Bench } from '../../scripts/detection/harness.ts';
import type { BaselineFile } from '../../agent/baseline/format.ts';
import { defaultRules } from '../../agent/rules/rules.ts';
import { CONTAMINATION_HOLD_WEIGHT, contaminationWeight, segmentsAfter } from '../../dsp/detection/contamination.ts';

const TAU = 2;
// 1 V full scale and an exponential average of τ = 2 s keep the run short; 4 kS/s, 1024-point Hann at 50 %.
const BENCH: Bench = { ...DEFAULT_BENCH, averaging: { mode: 'exponential', tauSeconds: TAU }, fullScale: 1 };
const FS = BENCH.sampleRate;
const SEGMENT = BENCH.analysis.segment;
const STEP = SEGMENT / 2;
const SPECTRAL = new Set(['spur', 'mains', 'band-rise']);
// The rules' default recent window (agent/rules/rules.ts), seconds.
const BENCH_RECENT_SECONDS = defaultRules().recentWindow;

function python(code: string): unknown {
  const r = spawnSync('python3', ['-c', code], { encoding: 'utf8' });
  if (r.status !== 0) throw new Error(`python3 failed: ${r.stderr}`);
  return JSON.parse(r.stdout);
}

let baseline: BaselineFile;
beforeAll(() => {
  baseline = captureQuietBaseline(BENCH, 30, 201);
});

describe('overload hold', () => {
  it("holds new spectral alarms while clipped segments weigh ≥ 1 % of their entry weight, and raises none of the burst's products after it", () => {
    // A 119.47 Hz swing at 1.2 × full scale for 0.1 s, as in the demo's overload: clipping spreads its harmonics
    // and their aliases over the whole spectrum.
    const r = runScenario({
      bench: BENCH,
      baseline,
      seed: 31,
      onsetSeconds: 10,
      seconds: 36,
      fault: { kind: 'overload', frequency: 119.47, peak: 1.2, seconds: 0.1 },
    });
    const clip = r.events.filter((e) => e.rule === 'clip');
    expect(clip.map((e) => e.state)).toEqual(['raised', 'cleared']);
    const clipFirst = clip[0].sample;
    // Last clipped sample: the sine's last crest above full scale before the burst ends at 10.1 s.
    const lastClipped = 10.1 * FS - 1;
    // Release: the newest segment holding a clipped sample has decayed to (1 − α)^n = e^(−n·hop/τ) ≤ 1 % of its
    // entry weight (first-order recursion, common practice; the function is checked against scipy below), i.e.
    // n ≥ τ·ln(100)/hop newer segments; the first of those ends at lastClipped + segment.
    const n = Math.ceil((TAU * Math.log(1 / CONTAMINATION_HOLD_WEIGHT)) / (STEP / FS));
    const release = lastClipped + SEGMENT + (n - 1) * STEP;
    const spectral = r.events.filter(
      (e) => e.kind === 'alarm' && SPECTRAL.has(e.rule) && e.state === 'raised' && e.sample >= clipFirst,
    );
    // Nothing raised between the clip and the release (the products were above threshold all along) …
    expect(spectral.filter((e) => e.sample < release - STEP)).toEqual([]);
    // … nor at the release: the long average still holds the products there, but a raise also needs the recent
    // estimate (a few seconds long), which forgot the 0.1 s burst well before the release.
    expect(release - lastClipped).toBeGreaterThan(BENCH_RECENT_SECONDS * FS + SEGMENT);
    expect(spectral).toEqual([]);
    // A 119.47 Hz line is 0.53 Hz off 2 × 60 Hz and 19.47 Hz off 2 × 50 Hz: outside the ±0.2 Hz normal range of
    // either grid (EN 50160 allows ±1 % over a year; ±0.2 Hz is the usual normal range, from memory): never mains.
    expect(r.events.filter((e) => e.rule === 'mains')).toEqual([]);
    expect(r.status?.[0].mains.nominal).toBe(0);
  });

  it('keeps a line alarm paired: its clear carries the frequency it was raised with, and status agrees with the log', () => {
    // A 0.3 µV rms tone present 5–15 s. An alarm journal pairs each return to normal with the alarm it ends
    // (ISA-18.2 alarm records, common practice); the status table keys lines by frequency to 0.1 Hz.
    const r = runScenario({
      bench: { ...BENCH, fullScale: undefined },
      baseline,
      seed: 32,
      onsetSeconds: 5,
      seconds: 30,
      fault: { kind: 'overload', frequency: 1234.56, peak: 3e-7 * Math.SQRT2, seconds: 10 },
    });
    const spur = r.events.filter((e) => e.rule === 'spur');
    expect(spur.map((e) => e.state)).toEqual(['raised', 'settled', 'cleared']);
    // The clear carries the frequency announced at the raise (the settled event carries the measured one).
    expect(spur[2].frequency).toBe(spur[0].frequency);
    expect(spur[0].frequency!.toFixed(1)).toBe(spur[2].frequency!.toFixed(1));
    expect(Math.abs(spur[1].frequency! - 1234.56)).toBeLessThan(0.5);
    // numpy's view of where the tone sits: within half a bin of 1234.56 Hz.
    const bin = python(
      `import numpy as np, json; f=np.fft.rfftfreq(${SEGMENT}, 1/${FS}); print(json.dumps(float(f[1]-f[0])))`,
    ) as number;
    expect(Math.abs(spur[0].frequency! - 1234.56)).toBeLessThan(bin / 2);
    // Status: no line reads as raised once the log says cleared.
    expect((r.status?.[0].lines ?? []).filter((l) => l.active)).toEqual([]);
  });
});

describe('contamination weight', () => {
  it('matches the impulse response of each average as scipy.signal.lfilter and numpy compute it', () => {
    const hop = STEP / FS;
    const N = 80;
    const j = 10; // the contaminated segment is the 11th of the average
    const ref = python(`
import json, numpy as np
from scipy.signal import lfilter
N, j, hop, tau, K = ${N}, ${j}, ${hop}, ${TAU}, 16
a = 1 - np.exp(-hop / tau)
x = np.zeros(N); x[j] = 1.0
ex = lfilter([a], [1, -(1 - a)], x)          # est += a (P - est)
mean = np.cumsum(x) / np.arange(1, N + 1)      # running mean
roll = np.convolve(x, np.ones(K) / K)[:N]      # mean of the last K
print(json.dumps({"ex": (ex / ex[j]).tolist(), "mean": (mean / mean[j]).tolist(), "roll": (roll / roll[j]).tolist()}))
`) as { ex: number[]; mean: number[]; roll: number[] };
    for (let m = j; m < N; m++) {
      const newer = m - j;
      const used = m + 1;
      expect(contaminationWeight({ mode: 'exponential', tauSeconds: TAU }, newer, used, hop)).toBeCloseTo(
        ref.ex[m],
        12,
      );
      expect(contaminationWeight({ mode: 'mean' }, newer, used, hop)).toBeCloseTo(ref.mean[m], 12);
      expect(contaminationWeight({ mode: 'rolling', count: 16 }, newer, Math.min(used, 16), hop)).toBeCloseTo(
        ref.roll[m] > 1e-12 ? 1 : 0,
        12,
      );
    }
    // Max hold never forgets until the average restarts; a restarted average holds none of it.
    expect(contaminationWeight({ mode: 'max' }, 70, 80, hop)).toBe(1);
    expect(contaminationWeight({ mode: 'max' }, 70, 5, hop)).toBe(0);
  });

  it('counts the segments that start after the last clipped sample', () => {
    // Segments of 1024 every 512 samples end at 1023, 1535, …; one ending at e starts at e − 1023, so it is clean
    // of a clip at sample 3000 when e − 1023 > 3000 (counted here by listing the ends directly).
    const ends = [3071, 3583, 4095, 4607, 5119];
    const clean = ends.filter((e) => e - SEGMENT + 1 > 3000).length;
    expect(segmentsAfter(5119, 3000, SEGMENT, STEP)).toBe(clean);
    expect(segmentsAfter(3583, 3000, SEGMENT, STEP)).toBe(0);
  });
});
