// SpanWelch (spans of segments on worker threads, samples shared) against scipy.signal.welch on the same samples,
// for thread counts that do and do not divide the segment count, with mean and linear detrend.
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { SpanWelch } from '../../agent/workers/span-welch.ts';
import { SeededRandom } from '../../dsp/random.ts';
import { Python } from '../wav/support.ts';

let py: Python;
beforeAll(() => {
  py = new Python();
});
afterAll(() => py.close());

const n = 300_001;
const x = new Float64Array(new SharedArrayBuffer(n * 8));
new SeededRandom(15).fillGaussian(x, 1e-3);
for (let i = 0; i < n; i++) x[i] += 2e-4 * Math.sin(i * 0.3) + 1e-9 * i;

// Source: scipy.signal.welch(x, fs, window='hann', nperseg, noverlap=floor(overlap·nperseg), detrend).
const REFERENCE = String.raw`
x = np.array(args[0]); o = args[1]
f, p = signal.welch(x, fs=o["fs"], window="hann", nperseg=o["segment"], noverlap=int(o["overlap"] * o["segment"]), detrend=o["detrend"])
result = p.tolist()
`;

describe('SpanWelch', () => {
  for (const [threads, segment, overlap, detrend] of [
    [2, 1024, 0.5, 'mean'],
    [3, 512, 0.75, 'linear'],
    [1, 2048, 0.5, 'mean'],
  ] as const) {
    it(`equals scipy.signal.welch within 1e-9 on ${threads} thread(s), segment ${segment}, overlap ${overlap}, ${detrend} detrend`, async () => {
      const span = new SpanWelch(threads);
      try {
        const r = await span.psd(x, { sampleRate: 1000, segment, window: 'hann', overlap, detrend });
        const ref = await py.run<number[]>(REFERENCE, Array.from(x), {
          fs: 1000,
          segment,
          overlap,
          detrend: detrend === 'mean' ? 'constant' : 'linear',
        });
        expect(r.psd.length).toBe(ref.length);
        expect(r.segments).toBe(Math.floor((n - segment) / (segment - Math.floor(overlap * segment))) + 1);
        let worst = 0;
        ref.forEach((v, k) => (worst = Math.max(worst, Math.abs(r.psd[k] - v) / v)));
        expect(worst).toBeLessThan(1e-9);
      } finally {
        await span.close();
      }
    }, 60_000);
  }

  it('refuses samples outside a SharedArrayBuffer, naming the fix', async () => {
    const span = new SpanWelch(1);
    try {
      await expect(
        span.psd(new Float64Array(4096), {
          sampleRate: 1,
          segment: 1024,
          window: 'hann',
          overlap: 0.5,
          detrend: 'mean',
        }),
      ).rejects.toThrow(/SharedArrayBuffer/);
    } finally {
      await span.close();
    }
  });
});
