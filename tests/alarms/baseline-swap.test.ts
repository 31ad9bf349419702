import { describe, expect, it } from 'vitest';
import { Pipeline } from '../../agent/pipeline/pipeline.ts';
import { captureLive } from '../../agent/baseline/live-capture.ts';
import { AlarmHook } from '../../agent/rules/alarm-hook.ts';
import type { FloorlineEvent } from '../../protocol/events.ts';
import type { StreamInfo } from '../../protocol/stream.ts';
import { SeededRandom } from '../../dsp/random.ts';

const FS = 4000;
const info: StreamInfo = {
  sampleRate: FS,
  channels: [{ name: 'ch0', unit: 'V', scale: 1, fullScaleCounts: Infinity }],
  source: { kind: 'simulator', label: 'baseline swap test' },
  firstSample: 0,
};
const analysis = { segment: 1024, window: 'hann', overlap: 0.5, detrend: 'mean' as const };

function feed(p: Pipeline, rng: SeededRandom, from: number, seconds: number, sigma: number): number {
  const blk = 1000;
  for (let first = from; first < from + seconds * FS; first += blk) {
    p.block({ firstSample: first, frames: blk, data: [rng.fillGaussian(new Float64Array(blk), sigma)] });
  }
  return from + seconds * FS;
}

/** A pipeline whose alarm rules compare against 10 s of σ = 1 µV noise captured live, fed `swapFeed` s more of it. */
async function withLiveBaseline(seed: number, swapFeed: number) {
  const p = new Pipeline({ analysis, averaging: { mode: 'exponential', tauSeconds: 2 }, mode: 'lossless' });
  const hook = new AlarmHook();
  p.addDetector(hook);
  const events: FloorlineEvent[] = [];
  p.on('event', (e) => events.push(e));
  p.info(info);
  const rng = new SeededRandom(seed);
  let next = feed(p, rng, 0, 2, 1e-6);
  const cap = captureLive(p, { seconds: 10 });
  next = feed(p, rng, next, 12, 1e-6);
  hook.useBaseline(await cap.result, 'baselines/live.json');
  next = feed(p, rng, next, swapFeed, 1e-6);
  return { p, hook, events, rng, next };
}

describe('AlarmHook.useBaseline', () => {
  it('starts comparing against a baseline captured while running, and a doubled noise amplitude then raises band-rise and reads +6.02 dB ± 0.5 once settled', async () => {
    const { p, hook, events, rng, next } = await withLiveBaseline(4242, 10);
    const swapAt = events.find((e) => e.rule === 'baseline' && e.state === 'raised');
    expect(swapAt?.kind).toBe('info');
    // Without a baseline there is nothing to compare a band with: no band-rise before the swap, none on the same floor after it.
    expect(events.filter((e) => e.rule === 'band-rise')).toEqual([]);
    const riseFrom = next;
    feed(p, rng, next, 20, 2e-6);
    const raised = events.filter((e) => e.rule === 'band-rise' && e.state === 'raised');
    expect(raised.length).toBeGreaterThan(0);
    expect(raised[0].sample).toBeGreaterThan(riseFrom);
    // Doubling an amplitude is 20·log10(2) = 6.02 dB in power (common practice). The raised event reports the level
    // that crossed the threshold (by construction just past it), so the check reads the live band level after the
    // average has settled: 20 s of the doubled noise is 10 τ of the exponential average (e^−10 of the old floor
    // left), and ±0.5 dB is several standard deviations of the whole-band estimate over hundreds of bins.
    const wide = hook.detectors!.status()[0].bands.filter((b) => b.high - b.low > FS / 4);
    expect(wide.length).toBeGreaterThan(0);
    for (const b of wide) {
      expect(b.active).toBe(true);
      expect(Math.abs(b.levelDb - 20 * Math.log10(2))).toBeLessThan(0.5);
    }
  });

  it('refuses at once a baseline taken with other analysis settings, naming the setting', async () => {
    const p = new Pipeline({ analysis, mode: 'lossless' });
    const hook = new AlarmHook();
    p.addDetector(hook);
    p.info(info);
    const rng = new SeededRandom(7);
    feed(p, rng, 0, 1, 1e-6);
    const other = new Pipeline({ analysis: { ...analysis, segment: 2048 }, mode: 'lossless' });
    other.info(info);
    const cap = captureLive(other, { seconds: 5 });
    feed(other, rng, 0, 6, 1e-6);
    const b = await cap.result;
    expect(() => hook.useBaseline(b, 'baselines/other.json')).toThrow(/segment \(2048 vs 1024\)/);
  });

  it('clears the raised alarms and ends their incident when new analysis settings rebuild the rules, saying why', async () => {
    const start = await withLiveBaseline(99, 4);
    const { p, hook, events, rng } = start;
    let next = start.next;
    // Doubled noise amplitude: +6.02 dB of power over the baseline (common practice), well past the threshold.
    next = feed(p, rng, next, 20, 2e-6);
    const raised = events.filter((e) => e.rule === 'band-rise' && e.state === 'raised');
    expect(raised.length).toBeGreaterThan(0);
    const incidents = new Set(raised.map((e) => e.incident));
    const changeAt = next;
    p.configure({ analysis: { segment: 2048 } });
    feed(p, rng, next, 4, 2e-6);
    const forced = events.filter((e) => e.state === 'cleared' && e.detail.includes('closed without a judged end'));
    // One clear per raised band, each naming the setting that changed, at or after the change, with a peak.
    expect(new Set(forced.map((e) => e.band!.join(':')))).toEqual(new Set(raised.map((e) => e.band!.join(':'))));
    for (const e of forced) {
      expect(e.detail).toContain('rebuilt for new analysis settings (segment (2048 vs 1024))');
      expect(e.sample).toBeGreaterThanOrEqual(changeAt - 1);
      expect(e.peakLevelDb).toBeGreaterThan(3);
      expect(e.detail).toContain(`peak ${e.peakLevelDb} dB`);
    }
    const ended = hook.incidentRecords()!.filter((i) => incidents.has(i.id));
    expect(ended.length).toBe(incidents.size);
    for (const i of ended) expect(i.end?.sample).toBe(forced.find((e) => e.incident === i.id)!.sample);
  });
});
