// The live low-frequency view hung on a real Pipeline (the way the monitor wires it): blocks arrive as the
// pipeline's calibrated float32 samples, and a replay seam (gap with lost = 0, restartsAt) makes the second loop
// repeat the first. The 0.1–10 Hz figures of both loops are checked against scipy on the float32 samples.
import { describe, expect, it } from 'vitest';
import { Pipeline } from '../../agent/pipeline/pipeline.ts';
import { LiveLowFrequency } from '../../agent/lowfreq/live-low-frequency.ts';
import type { LowFrequencyUpdate } from '../../protocol/low-frequency-messages.ts';
import { SeededRandom } from '../../dsp/random.ts';
import { runPython } from '../logfreq/python.ts';

const FS = 1000;
const N = 30 * FS;

describe('LiveLowFrequency on a Pipeline', () => {
  it('repeats the first loop after a replay seam, with 0.1–10 Hz figures equal to scipy on the float32 samples', async () => {
    const x = new SeededRandom(31).fillGaussian(new Float64Array(N), 2e-6);
    for (let i = 0; i < N; i++)
      x[i] += 1e-5 * Math.sin((2 * Math.PI * 0.03 * i) / FS) + 5e-6 * Math.sin((2 * Math.PI * 3 * i) / FS);
    const pipeline = new Pipeline({ mode: 'lossless' });
    const view = new LiveLowFrequency({ updatesPerSecond: 2, fitEvery: 2 }).attach(pipeline);
    const updates: LowFrequencyUpdate[] = [];
    view.onUpdate((u) => updates.push(JSON.parse(JSON.stringify(u)) as LowFrequencyUpdate));
    pipeline.info({
      sampleRate: FS,
      channels: [{ name: 'in', unit: 'V', scale: 1, fullScaleCounts: Infinity }],
      source: { kind: 'replay', label: 'test' },
      firstSample: 0,
    });
    const feed = (first: number, block: number): void => {
      for (let at = 0; at < N; at += block) {
        const n = Math.min(block, N - at);
        pipeline.block({ firstSample: first + at, frames: n, data: [x.slice(at, at + n)] });
      }
    };
    feed(0, 1024);
    const firstLoop = updates.length;
    pipeline.gap({ sample: N, lost: 0, reason: 'loop', restartsAt: 0 });
    feed(N, 700);
    expect(updates.length).toBe(2 * firstLoop);
    expect(firstLoop).toBe(60);
    for (let k = 0; k < firstLoop; k++) {
      const a = updates[k];
      const b = updates[k + firstLoop];
      expect(b.sample).toBe(a.sample + N);
      expect(b.channels[0].asd).toEqual(a.channels[0].asd);
      expect(b.channels[0].fit?.corner).toEqual(a.channels[0].fit?.corner);
    }
    const pp1 = updates[firstLoop - 1].channels[0].peakToPeak!;
    const pp2 = updates[2 * firstLoop - 1].channels[0].peakToPeak!;
    expect(pp2.startSample).toBe(pp1.startSample + N);
    // Reference: scipy.signal.sosfilt (butter(2, 0.1, 'highpass') then butter(4, 10, 'lowpass'), zi = sosfilt_zi · x[0])
    // on np.float32(x), what the pipeline's conditioner delivers (Math.fround), then np.ptp / RMS / 6.6·np.std.
    const ref = runPython<{ ptp: number; rms: number; g: number }>(
      `
from scipy.signal import butter, sosfilt, sosfilt_zi
fs = inp['fs']; x = inp['x'].astype(np.float32).astype(np.float64)
sos = np.vstack([butter(2, 0.1, 'highpass', fs=fs, output='sos'), butter(4, 10, 'lowpass', fs=fs, output='sos')])
y, _ = sosfilt(sos, x, zi=sosfilt_zi(sos) * x[0])
s = y[int(inp['a']):int(inp['b']) + 1]
out['ptp'] = np.ptp(s); out['rms'] = np.sqrt(np.mean(s ** 2)); out['g'] = 6.6 * np.std(s)
`,
      { x, fs: FS, a: pp1.startSample, b: pp1.sample },
    );
    for (const pp of [pp1, pp2]) {
      expect(Math.abs(pp.peakToPeak - ref.ptp) / ref.ptp).toBeLessThan(1e-9);
      expect(Math.abs(pp.rms - ref.rms) / ref.rms).toBeLessThan(1e-9);
      expect(Math.abs(pp.gaussianPeakToPeak - ref.g) / ref.g).toBeLessThan(1e-9);
    }
    pipeline.end();
  });
});
