// WorkerChannelSpectra against LocalChannelSpectra: the same psd bit for bit per channel (each estimator sees the
// same blocks), with at most BUFFERS_PER_CHANNEL buffers per channel however fast blocks are pushed; and the
// estimate itself against scipy.signal.welch.
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { LocalChannelSpectra, type ChannelEstimatorPlan } from '../../agent/workers/channel-spectra.ts';
import { BUFFERS_PER_CHANNEL, WorkerChannelSpectra } from '../../agent/workers/worker-channel-spectra.ts';
import { SeededRandom } from '../../dsp/random.ts';
import { Python } from '../wav/support.ts';

let py: Python;
beforeAll(() => {
  py = new Python();
});
afterAll(() => py.close());

const CH = 3;
const BLOCK = 5000;
const BLOCKS = 40;
const plan: ChannelEstimatorPlan = {
  sampleRate: 1000,
  segment: 1024,
  window: 'hann',
  overlap: 0.5,
  detrend: 'mean',
  firstSample: 0,
};
const rng = new SeededRandom(3);
const signal = Array.from({ length: CH }, (_, c) => rng.fillGaussian(new Float64Array(BLOCK * BLOCKS), 1 + c));

describe('WorkerChannelSpectra', () => {
  it('equals the one-thread estimates bit for bit with bounded buffers, and scipy.signal.welch within 1e-9', async () => {
    const local = new LocalChannelSpectra(plan, CH);
    const workers = new WorkerChannelSpectra(plan, CH, 2);
    // One reused block per channel, as the WAV reader hands them out.
    const block = Array.from({ length: CH }, () => new Float64Array(BLOCK));
    for (let b = 0; b < BLOCKS; b++) {
      for (let c = 0; c < CH; c++) block[c].set(signal[c].subarray(b * BLOCK, (b + 1) * BLOCK));
      local.push(block, BLOCK);
      await workers.push(block, BLOCK);
      expect(workers.buffersAllocated).toBeLessThanOrEqual(CH * BUFFERS_PER_CHANNEL);
    }
    const [a, w] = [await local.finish(), await workers.finish()];
    for (let c = 0; c < CH; c++) {
      expect(w[c].segmentsUsed).toBe(a[c].segmentsUsed);
      expect(w[c].equivalentAverages).toBe(a[c].equivalentAverages);
      expect(Buffer.from(w[c].psd.buffer).equals(Buffer.from(a[c].psd.buffer))).toBe(true);
    }
    // Source: scipy.signal.welch(x, fs=1000, window='hann', nperseg=1024, noverlap=512, detrend='constant').
    const ref = await py.run<number[][]>(
      String.raw`result = [signal.welch(np.array(x), fs=1000, window="hann", nperseg=1024, noverlap=512, detrend="constant")[1].tolist() for x in args[0]]`,
      signal.map((x) => Array.from(x)),
    );
    for (let c = 0; c < CH; c++) {
      let worst = 0;
      ref[c].forEach((v, k) => (worst = Math.max(worst, Math.abs(w[c].psd[k] - v) / v)));
      expect(worst).toBeLessThan(1e-9);
    }
  }, 60_000);
});
