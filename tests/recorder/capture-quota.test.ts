// Captures are bounded: one file per incident (a re-raise of the same incident reuses it), and a byte quota over
// all capture files beyond which no new capture starts and one event says so.
import { readdirSync } from 'node:fs';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { Pipeline } from '../../agent/pipeline/pipeline.ts';
import { Recorder } from '../../agent/recorder/recorder.ts';
import { dataFolderAt, ensureDataFolder } from '../../agent/config/data-folder.ts';
import type { FloorlineEvent } from '../../protocol/events.ts';
import { tempDir } from '../wav/support.ts';

describe('event captures', () => {
  it('make one file per incident and stop at the quota with one event', () => {
    const folder = ensureDataFolder(dataFolderAt(tempDir('quota')));
    const p = new Pipeline({ analysis: { segment: 256 }, mode: 'lossless' });
    // One capture = (1 + 1) s × 1000 Hz × 1 channel × 4 bytes = 8000 bytes; the quota holds two.
    const rec = new Recorder(folder, { durable: false, preSeconds: 1, postSeconds: 1, captureQuotaBytes: 17_000 });
    rec.attach(p);
    const events: FloorlineEvent[] = [];
    p.on('event', (e) => events.push(e));
    p.info({
      sampleRate: 1000,
      channels: [{ name: 'a', unit: 'V', scale: 1, fullScaleCounts: Infinity }],
      source: { kind: 'simulator', label: 't' },
      firstSample: 0,
    });
    const x = new Float64Array(1000).fill(1e-3);
    const files: string[] = [];
    for (let i = 0; i < 20; i++) {
      p.block({ firstSample: i * 1000, frames: 1000, data: [x] });
      if (i >= 2 && i % 2 === 0) files.push(rec.capture(i * 1000, i < 10 ? 'inc-1 a' : `inc-${i} a`).file); // inc-1 raised 4 times
    }
    rec.close();
    const onDisk = readdirSync(folder.recordings).filter((n) => n.endsWith('.wav'));
    expect(onDisk).toHaveLength(2); // inc-1 once, inc-10 once; the quota refuses the rest
    expect(new Set(files.slice(0, 4)).size).toBe(1);
    expect(files.slice(5).every((f) => f === '')).toBe(true);
    expect(events.filter((e) => /capture quota reached/.test(e.detail))).toHaveLength(1);
    expect(onDisk.map((n) => join('recordings', n)).sort()).toEqual([...new Set(files.filter(Boolean))].sort());
  });
});
