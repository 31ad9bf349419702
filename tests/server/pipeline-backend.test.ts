// The adapter from the pipeline to the server: alarm rows and acknowledgement, band figures from the snapshot.
import { describe, expect, it } from 'vitest';
import { mkdtempSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { PipelineBackend } from '../../agent/server/pipeline-backend.ts';
import { dataFolderAt } from '../../agent/config/data-folder.ts';
import type { Pipeline } from '../../agent/pipeline/pipeline.ts';
import type { FloorlineEvent } from '../../protocol/events.ts';
import type { AlarmRef } from '../../agent/server/backend.ts';

/** The few Pipeline members the adapter uses, with a hand to emit its events. */
function fakePipeline() {
  const handlers = new Map<string, ((v: unknown) => void)[]>();
  const p = {
    stream: { sampleRate: 8000, channels: [{ name: 'ch0', unit: 'V', scale: 1, fullScaleCounts: Infinity }], source: { kind: 'replay', label: 't' }, firstSample: 0 },
    analysisSettings: { sampleRate: 8000, segment: 1024, window: 'hann', overlap: 0.5, detrend: 'mean' },
    averaging: { mode: 'mean' },
    counters: () => ({ samples: 8000, lastSample: 7999, gaps: 0, lostSamples: 0, droppedBlocks: 0 }),
    on: (name: string, fn: (v: unknown) => void) => {
      handlers.set(name, [...(handlers.get(name) ?? []), fn]);
      return () => undefined;
    },
    emit: (name: string, v: unknown) => handlers.get(name)?.forEach((f) => f(v)),
  };
  return p;
}

function event(rule: FloorlineEvent['rule'], state: FloorlineEvent['state'], extra: Partial<FloorlineEvent> = {}): FloorlineEvent {
  return { kind: 'alarm', rule, state, channel: 'ch0', sample: 100, t: 0.0125, wallTime: '2026-01-01T00:00:00.000Z', detail: '', ...extra };
}

function setup() {
  const p = fakePipeline();
  const acks: AlarmRef[] = [];
  const b = new PipelineBackend({
    pipeline: p as unknown as Pipeline,
    data: dataFolderAt(mkdtempSync(join(tmpdir(), 'floorline-pb-'))),
    acknowledge: (ref) => (acks.push(ref), true),
    bands: () => [{ low: 5.859375, high: 3998.046875 }],
  });
  return { p, b, acks };
}

describe('PipelineBackend', () => {
  it('keeps one alarm row per mains harmonic, keeps an acknowledgement while raised and asks again after a clear', () => {
    const { p, b } = setup();
    p.emit('event', event('mains', 'raised', { harmonic: 1, frequency: 50.01 }));
    p.emit('event', event('mains', 'raised', { harmonic: 3, frequency: 150.02 }));
    expect(b.status().alarms).toHaveLength(2);
    expect(b.acknowledge({ rule: 'mains', channel: 'ch0' })).toBe(true);
    expect(b.status().alarms.every((a) => a.acknowledged)).toBe(true);
    p.emit('event', event('mains', 'raised', { harmonic: 1, frequency: 50.02 })); // a repeat while raised
    expect(b.status().alarms.find((a) => a.frequency === 50.02)?.acknowledged).toBe(true);
    p.emit('event', event('mains', 'cleared', { harmonic: 3, frequency: 150.02 }));
    p.emit('event', event('mains', 'raised', { harmonic: 3, frequency: 150.03 })); // raised again after clearing
    expect(b.status().alarms.find((a) => a.frequency === 150.03)?.acknowledged).toBe(false);
  });

  it('maps the rounded band edges of an event to the rule’s exact ones when acknowledging', () => {
    const { p, b, acks } = setup();
    p.emit('event', event('band-rise', 'raised', { band: [5.859375, 3998.05] }));
    b.acknowledge({ rule: 'band-rise', channel: 'ch0', band: [5.859375, 3998.05] });
    expect(acks[0].band).toEqual([5.859375, 3998.046875]);
  });

  it('derives the mains fundamental for the markers from the newest mains event (line frequency / harmonic)', () => {
    const { p, b } = setup();
    expect(b.mainsHz()).toBeNull();
    p.emit('event', event('mains', 'raised', { harmonic: 3, frequency: 150.06 }));
    expect(b.mainsHz()).toBeCloseTo(50.02, 10);
  });

  it('computes band RMS as sqrt(Σ psd · binHz) over the band’s bins (docs/ARCHITECTURE.md), and the band floor as the median density', () => {
    const { p, b } = setup();
    const psd = new Float64Array(513).fill(4e-16);
    psd[100] = 4e-12; // a line: moves the RMS, not the median floor
    p.emit('snapshot', { sample: 7999, t: 1, wallTime: '', sequence: 0, settings: p.analysisSettings, averaging: { mode: 'mean' }, frequencies: new Float64Array(513), binHz: 8000 / 1024, nenbw: 1.5, enbwHz: 11.72, channels: [{ name: 'ch0', unit: 'V', psd, segmentsUsed: 15, segmentsTotal: 15, equivalentAverages: 14, lastSegmentSample: 7999 }] });
    const row = b.status().bands[0];
    // Bins with 5.859375 ≤ k·7.8125 ≤ 3998.046875: k = 1..511.
    expect(row.rms).toBeCloseTo(Math.sqrt((510 * 4e-16 + 4e-12) * 7.8125), 15);
    expect(row.floorDensity).toBeCloseTo(2e-8, 20);
    expect(row.state).toBe('no-baseline');
  });
});
