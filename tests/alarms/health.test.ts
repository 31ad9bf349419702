import { mkdtempSync, readFileSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { Pipeline } from '../../agent/pipeline/pipeline.ts';
import { AlarmHook } from '../../agent/rules/alarm-hook.ts';
import { Detectors } from '../../agent/rules/detectors.ts';
import { defaultRules } from '../../agent/rules/rules.ts';
import { EventLog } from '../../agent/events/event-log.ts';
import type { FloorlineEvent } from '../../protocol/events.ts';
import type { StreamInfo } from '../../protocol/stream.ts';
import { SeededRandom } from '../../dsp/random.ts';
import { captureQuietBaseline, DEFAULT_BENCH, runScenario } from '../../scripts/detection/harness.ts';

const FS = 4000;
const info: StreamInfo = {
  sampleRate: FS,
  channels: [{ name: 'ch0', unit: 'V', scale: 1e-6, fullScaleCounts: 32767 }],
  source: { kind: 'simulator', label: 'health test' },
  firstSample: 0,
  startWallTime: '2026-01-01T00:00:00.000Z',
};

/** Feeds seeded noise (σ = 100 counts) in 1000-frame blocks; `at` can alter a block (clip, skip) by its index. */
function drive(
  blocks: number,
  at: (i: number, p: Pipeline, data: Float64Array, first: number) => boolean | void,
): FloorlineEvent[] {
  const p = new Pipeline({
    analysis: { segment: 1024, window: 'hann', overlap: 0.5, detrend: 'mean' },
    mode: 'lossless',
  });
  p.addDetector(new AlarmHook());
  const events: FloorlineEvent[] = [];
  p.on('event', (e) => events.push(e));
  p.info(info);
  const rng = new SeededRandom(3);
  const data = new Float64Array(1000);
  for (let i = 0; i < blocks; i++) {
    rng.fillGaussian(data, 100);
    if (at(i, p, data, i * 1000) === false) continue;
    p.block({ firstSample: i * 1000, frames: 1000, data: [data] });
  }
  p.end();
  return events;
}

describe('health alarms', () => {
  it('samples within 0.1 % of full scale raise clip once, cleared after a second without clipping', () => {
    // Within 0.1 % of full scale counts as clipped (the clip rule of DEVELOPERS.md "Conditioning"; common practice for ADC overload flags).
    const events = drive(40, (i, _p, d) => {
      if (i === 10 || i === 11) d[500] = 32767 * 0.9995;
      if (i === 12) d[500] = 32767 * 0.998; // 0.2 % below full scale: not a clip
    });
    const clip = events.filter((e) => e.rule === 'clip');
    // The clear comes with the first spectrum at least clipHold = 1 s (defaultRules) after the last clip at 11 500.
    // Spectra, by the sample-time rules of DEVELOPERS.md "Pipeline": instants s with (s + 1) mod (FS / 10) = 0,
    // taken when a segment (1024, step 512, ends at 1023 + 512 k) completed since the previous instant.
    const hop = FS / 10;
    let clearAt = -1;
    for (let s = hop - 1; clearAt < 0; s += hop) {
      const segmentEnded = Math.floor((s - 1023) / 512) > Math.floor((s - hop - 1023) / 512);
      if (s - 11_500 >= FS && segmentEnded) clearAt = s;
    }
    expect(clearAt).toBe(15_599); // worked by hand: 15 599 is the first instant ≥ 15 500, segment 15 359 ended before it
    expect(clip.map((e) => [e.state, e.sample])).toEqual([
      ['raised', 10_500],
      ['cleared', clearAt],
    ]);
  });

  it('lost samples raise a gap stamped at the first missing sample, cleared when data flows again', () => {
    const events = drive(30, (i) => (i === 15 ? false : undefined));
    const gap = events.filter((e) => e.rule === 'gap');
    expect(gap.map((e) => e.state)).toEqual(['raised', 'cleared']);
    expect(gap[0].sample).toBe(15_000);
    expect(gap[0].detail).toMatch(/1000 samples lost/);
    expect(gap[1].sample).toBeGreaterThan(16_000);
  });

  it('board lost and back raise and clear the link alarm in sample time', () => {
    const events = drive(30, (i, p) => {
      if (i === 12) p.link({ state: 'lost', sample: 11_999, detail: 'no bytes for 1 s' });
      if (i === 13) p.link({ state: 'back', sample: 11_999, detail: 'descriptor received' });
    });
    const link = events.filter((e) => e.rule === 'link');
    expect(link.map((e) => [e.state, e.sample, e.t])).toEqual([
      ['raised', 11_999, 11_999 / FS],
      ['cleared', 11_999, 11_999 / FS],
    ]);
  });
});

describe('analysis overrun', () => {
  it('dropped blocks raise overrun once and clear it after a second of sample time without drops', () => {
    const d = new Detectors(undefined, defaultRules(), {
      settings: { sampleRate: FS, segment: 1024, window: 'hann', overlap: 0.5, detrend: 'mean' },
      channels: [{ name: 'ch0' }],
      startWallTime: '2026-01-01T00:00:00.000Z',
    });
    const psd = new Float64Array(513).fill(1e-16);
    const snap = (sample: number) => ({
      sample,
      t: sample / FS,
      wallTime: '',
      settings: d.settings,
      frequencies: new Float64Array(513),
      channels: [{ name: 'ch0', unit: 'V', psd, segmentsUsed: 10, equivalentAverages: 10 }],
    });
    const raised = d.onOverrun({ sample: 8000, lost: 4000, droppedBlocks: 2 });
    expect(raised.map((e) => [e.rule, e.state, e.sample, e.wallTime])).toEqual([
      ['overrun', 'raised', 8000, '2026-01-01T00:00:02.000Z'],
    ]);
    expect(d.onOverrun({ sample: 9000, lost: 1000, droppedBlocks: 1 })).toEqual([]);
    expect(d.onSnapshot(snap(12_000)).filter((e) => e.rule === 'overrun')).toEqual([]);
    const cleared = d.onSnapshot(snap(13_000)).filter((e) => e.rule === 'overrun');
    expect(cleared.map((e) => e.state)).toEqual(['cleared']);
    expect(cleared[0].detail).toMatch(/3 blocks dropped in all/);
  });
});

describe('acknowledge and shelve', () => {
  it('a shelved band rule stays silent while its fault is present and speaks when the shelf ends', () => {
    const baseline = captureQuietBaseline(DEFAULT_BENCH, 60, 301);
    const plain = runScenario({
      bench: DEFAULT_BENCH,
      baseline,
      seed: 302,
      onsetSeconds: 10,
      seconds: 40,
      fault: { kind: 'band-rise', low: 200, high: 800, riseDb: 10 },
    });
    const raisedAt = plain.events.find((e) => e.rule === 'band-rise' && e.state === 'raised')!.sample;
    // Same run, shelving band-rise on ch0 until t = 30 s from the first snapshot on.
    const until = 30 * DEFAULT_BENCH.sampleRate;
    const shelved = runScenario({
      bench: DEFAULT_BENCH,
      baseline,
      seed: 302,
      onsetSeconds: 10,
      seconds: 40,
      fault: { kind: 'band-rise', low: 200, high: 800, riseDb: 10 },
      onHook: (hook) => hook.whenBuilt((d) => d.shelve('band-rise', 'ch0', until)),
    });
    const first = shelved.events.find((e) => e.rule === 'band-rise' && e.state === 'raised')!;
    expect(raisedAt).toBeLessThan(until);
    expect(first.sample).toBeGreaterThanOrEqual(until);
    expect(first.sample).toBeLessThan(until + 1000);
  });
});

describe('EventLog', () => {
  it('appends one JSON object per line to every target and each line is on disk before the next event', () => {
    const dir = mkdtempSync(join(tmpdir(), 'floorline-events-'));
    try {
      const a = join(dir, 'events.jsonl');
      const b = join(dir, 'sub/out.jsonl');
      const log = new EventLog([a, b]);
      const e: FloorlineEvent = {
        kind: 'alarm',
        rule: 'gap',
        state: 'raised',
        channel: '*',
        sample: 5,
        t: 0.00125,
        wallTime: '2026-01-01T00:00:00.001Z',
        detail: 'x',
      };
      log.write(e);
      // Read back before close: written through, not buffered (JSON Lines, jsonlines.org: one JSON value per line).
      expect(readFileSync(a, 'utf8')).toBe(JSON.stringify(e) + '\n');
      log.write({ ...e, state: 'cleared', sample: 9, t: 0.00225 });
      log.close();
      const lines = readFileSync(b, 'utf8').split('\n');
      expect(lines.length).toBe(3);
      expect(lines[2]).toBe('');
      expect(JSON.parse(lines[1]).state).toBe('cleared');
      // A second log appends rather than truncating.
      const again = new EventLog([a]);
      again.write(e);
      again.close();
      expect(readFileSync(a, 'utf8').trim().split('\n').length).toBe(3);
    } finally {
      rmSync(dir, { recursive: true, force: true });
    }
  });
});
