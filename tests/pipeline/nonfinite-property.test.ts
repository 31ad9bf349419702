// Property: random finite and non-finite samples (NaN, ±Inf, 1e308, subnormals) through conditioner → pipeline →
// detectors → recorder never throw; every frame holding a fault is counted and excluded like a gap, so no
// subscriber, spectrum or recording ever holds a non-finite value.
import { afterAll, describe, expect, it } from 'vitest';
import { mkdtempSync, readdirSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import fc from 'fast-check';
import { Pipeline } from '../../agent/pipeline/pipeline.ts';
import { AlarmHook } from '../../agent/rules/alarm-hook.ts';
import { Recorder } from '../../agent/recorder/recorder.ts';
import { dataFolderAt, ensureDataFolder } from '../../agent/config/data-folder.ts';
import { readWavFile } from '../../agent/wav/reader.ts';
import type { FloorlineEvent } from '../../protocol/events.ts';
import type { StreamInfo } from '../../protocol/stream.ts';

export const PROPERTY_RUNS = 40;
const dir = mkdtempSync(join(tmpdir(), 'floorline-nonfinite-'));
afterAll(() => rmSync(dir, { recursive: true, force: true }));

const info: StreamInfo = {
  sampleRate: 1000,
  // float32 board: scale 1, no code limit (full scale Infinity), so only non-finite values are faults
  channels: [
    { name: 'x', unit: 'V', scale: 1, fullScaleCounts: Infinity },
    { name: 'y', unit: 'V', scale: 1, fullScaleCounts: Infinity },
  ],
  source: { kind: 'simulator', label: 'property' },
  firstSample: 0,
  startWallTime: '2026-01-01T00:00:00.000Z',
};

// IEEE 754 specials and extremes (from memory: 1e308 overflows float32, 5e-324 is the smallest double subnormal,
// 1e-45 the smallest float32 subnormal).
const special = fc.constantFrom(NaN, Infinity, -Infinity, 1e308, -1e308, 5e-324, 1e-45, -0, 3.4028234663852886e38);
const sample = fc.oneof(
  { weight: 300, arbitrary: fc.double({ min: -1, max: 1, noNaN: true }) },
  { weight: 1, arbitrary: special },
);
const block = fc
  .integer({ min: 1, max: 600 })
  .chain((n) =>
    fc.tuple(fc.array(sample, { minLength: n, maxLength: n }), fc.array(sample, { minLength: n, maxLength: n })),
  );

let totalSamples = 0;

describe('non-finite samples', () => {
  it(`are counted and excluded everywhere, over ${PROPERTY_RUNS} random streams`, async () => {
    let run = 0;
    await fc.assert(
      fc.asyncProperty(fc.array(block, { minLength: 1, maxLength: 8 }), async (blocks) => {
        const folder = ensureDataFolder(dataFolderAt(join(dir, `run-${run++}`)));
        const p = new Pipeline({
          analysis: { segment: 64, window: 'hann', overlap: 0.5, detrend: 'mean' },
          mode: 'lossless',
        });
        p.addDetector(new AlarmHook());
        const recorder = new Recorder(folder, { durable: false, rotateSeconds: 0 });
        recorder.attach(p);
        const events: FloorlineEvent[] = [];
        let sawNonFinite = 0;
        p.on('event', (e) => events.push(e));
        p.on('block', (b) => {
          for (const d of b.data) for (let i = 0; i < b.frames; i++) if (!Number.isFinite(d[i])) sawNonFinite++;
        });
        p.on('snapshot', (s) => {
          for (const c of s.channels) for (const v of c.psd) if (!Number.isFinite(v)) sawNonFinite++;
        });
        p.info(info);
        recorder.startRecording();
        let first = 0;
        let expectedFaults = 0;
        for (const [a, b] of blocks) {
          for (let i = 0; i < a.length; i++)
            if (!Number.isFinite(Math.fround(a[i])) || !Number.isFinite(Math.fround(b[i]))) expectedFaults++;
          p.block({ firstSample: first, frames: a.length, data: [Float64Array.from(a), Float64Array.from(b)] });
          first += a.length;
          totalSamples += 2 * a.length;
        }
        p.end();
        recorder.close();
        expect(sawNonFinite).toBe(0);
        expect(p.counters().nonfiniteFrames).toBe(expectedFaults);
        expect(events.some((e) => e.rule === 'nonfinite' && e.state === 'raised')).toBe(expectedFaults > 0);
        // The recordings hold only finite samples, and exactly the frames that were not excluded.
        let recorded = 0;
        for (const name of readdirSync(folder.recordings).filter((n) => n.endsWith('.wav'))) {
          const { data, info: wi } = await readWavFile(join(folder.recordings, name));
          recorded += wi.frames;
          for (const d of data) for (const v of d) expect(Number.isFinite(v)).toBe(true);
        }
        expect(recorded).toBe(first - expectedFaults);
      }),
      { seed: 3, numRuns: PROPERTY_RUNS },
    );
    expect(totalSamples).toBeGreaterThan(10_000);
    console.log(`non-finite property: ${totalSamples} samples in ${PROPERTY_RUNS} streams`);
  }, 60_000);
});
