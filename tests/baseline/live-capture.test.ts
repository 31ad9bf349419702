import { describe, expect, it } from 'vitest';
import { Pipeline } from '../../agent/pipeline/pipeline.ts';
import { captureLive } from '../../agent/baseline/live-capture.ts';
import type { StreamInfo } from '../../protocol/stream.ts';
import { SeededRandom } from '../../dsp/random.ts';
import { scipyReference } from '../alarms/scipy-reference.ts';

const FS = 4000;
const info: StreamInfo = {
  sampleRate: FS,
  channels: [{ name: 'ch0', unit: 'V', scale: 1, fullScaleCounts: Infinity }],
  source: { kind: 'simulator', label: 'live capture test' },
  firstSample: 0,
};

describe('captureLive', () => {
  it('captures the span from the next block on and stores the density scipy.signal.welch gives for those samples', async () => {
    const p = new Pipeline({
      analysis: { segment: 1024, window: 'hann', overlap: 0.5, detrend: 'mean' },
      mode: 'lossless',
    });
    p.info(info);
    const rng = new SeededRandom(21);
    const all = new Float64Array(FS * 30);
    rng.fillGaussian(all, 1e-6);
    // The conditioner rounds calibrated samples to float32 (as recordings store them): give scipy the same values.
    for (let i = 0; i < all.length; i++) all[i] = Math.fround(all[i]);
    const blk = 1500;
    p.block({ firstSample: 0, frames: blk, data: [all.slice(0, blk)] });
    const cap = captureLive(p, { seconds: 10, notes: 'live' });
    for (let first = blk; first < all.length; first += blk) {
      p.block({ firstSample: first, frames: blk, data: [all.slice(first, first + blk)] });
    }
    const b = await cap.result;
    expect(cap.progress()).toBe(1);
    expect(b.span.firstSample).toBe(blk);
    expect(b.span.lastSample).toBe(blk + 10 * FS - 1);
    // Source: scipy.signal.welch(x[1500:41500], 4000, 'hann', 1024, 512, detrend='constant').
    const ref = scipyReference<{ psd: number[] }>('welch', {
      x: Array.from(all.subarray(blk, blk + 10 * FS)),
      fs: FS,
      segment: 1024,
    });
    let worst = 0;
    for (let k = 1; k < ref.psd.length; k++) worst = Math.max(worst, Math.abs(b.channels[0].psd[k] / ref.psd[k] - 1));
    expect(worst).toBeLessThan(1e-9);
    expect(b.notes).toBe('live');
  });

  it('refuses a span shorter than four segments and rejects when the stream ends early', async () => {
    const p = new Pipeline({
      analysis: { segment: 1024, window: 'hann', overlap: 0.5, detrend: 'mean' },
      mode: 'lossless',
    });
    expect(() => captureLive(p, { seconds: 10 })).toThrow(/not started/);
    p.info(info);
    expect(() => captureLive(p, { seconds: 0.5 })).toThrow(/shorter than 4 segments/);
    const cap = captureLive(p, { seconds: 10 });
    p.block({ firstSample: 0, frames: 4000, data: [new Float64Array(4000)] });
    p.end();
    await expect(cap.result).rejects.toThrow(/ended after 1\.0 s/);
  });

  for (const where of ['inside', 'in the last block'] as const) {
    it(`refuses a span with an overload ${where} (clipped samples at full scale), naming channel and sample`, async () => {
      // A converter at full scale reads its largest code: a clip (common practice). Full scale 1e-5 V here.
      const p = new Pipeline({
        analysis: { segment: 1024, window: 'hann', overlap: 0.5, detrend: 'mean' },
        mode: 'lossless',
      });
      p.info({ ...info, channels: [{ ...info.channels[0], fullScaleCounts: 1e-5 }] });
      const rng = new SeededRandom(5);
      const all = new Float64Array(FS * 12);
      rng.fillGaussian(all, 1e-6);
      const blk = 1000;
      const at = where === 'inside' ? 5 * FS + 123 : blk + 10 * FS - 10; // the span is [1000, 41000)
      for (let i = at; i < at + 8; i++) all[i] = 1e-5;
      p.block({ firstSample: 0, frames: blk, data: [all.slice(0, blk)] });
      const cap = captureLive(p, { seconds: 10 });
      for (let first = blk; first < all.length; first += blk) {
        p.block({ firstSample: first, frames: blk, data: [all.slice(first, first + blk)] });
      }
      await expect(cap.result).rejects.toThrow(
        new RegExp(`8 clipped samples on ch0 in the span \\(from sample ${at}, .*capture again over a clean span`),
      );
    });
  }

  it('takes a clean span next to an overload that ended before it', async () => {
    const p = new Pipeline({
      analysis: { segment: 1024, window: 'hann', overlap: 0.5, detrend: 'mean' },
      mode: 'lossless',
    });
    p.info({ ...info, channels: [{ ...info.channels[0], fullScaleCounts: 1e-5 }] });
    const rng = new SeededRandom(6);
    const all = new Float64Array(FS * 12);
    rng.fillGaussian(all, 1e-6);
    for (let i = 100; i < 108; i++) all[i] = 1e-5; // in the first block, before the capture starts
    const blk = 1000;
    p.block({ firstSample: 0, frames: blk, data: [all.slice(0, blk)] });
    const cap = captureLive(p, { seconds: 10 });
    for (let first = blk; first < all.length; first += blk) {
      p.block({ firstSample: first, frames: blk, data: [all.slice(first, first + blk)] });
    }
    expect((await cap.result).span.firstSample).toBe(blk);
  });
});
