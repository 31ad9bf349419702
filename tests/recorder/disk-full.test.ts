// A full disk, on a real small tmpfs (needs root, as CI and this machine run): file handles are closed even when
// the last flush fails (so deleting files frees space), recording resumes by itself once there is room and says
// so in events, no empty capture files are left, and the event log keeps whole lines with each target failing on
// its own.
import { spawnSync } from 'node:child_process';
import { existsSync, mkdirSync, readdirSync, readFileSync, rmSync, statfsSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { afterEach, describe, expect, it } from 'vitest';
import { Pipeline } from '../../agent/pipeline/pipeline.ts';
import { Recorder } from '../../agent/recorder/recorder.ts';
import { dataFolderAt, ensureDataFolder } from '../../agent/config/data-folder.ts';
import { EventLog } from '../../agent/events/event-log.ts';
import type { FloorlineEvent } from '../../protocol/events.ts';
import type { StreamInfo } from '../../protocol/stream.ts';
import { SeededRandom } from '../../dsp/random.ts';
import { tempDir } from '../wav/support.ts';
import { mountSmallDisk, releaseSmallDisks } from '../support/small-disk.ts';

afterEach(releaseSmallDisks);

function smallDisk(kib: number): string {
  return mountSmallDisk(join(tempDir('small-disk'), 'mnt'), `${kib}k`);
}

/** Fills the disk to the last byte with a filler file (written until ENOSPC). */
function fill(mnt: string): string {
  const path = join(mnt, 'filler');
  const chunk = Buffer.alloc(4096, 1);
  const parts: Buffer[] = [];
  for (;;) {
    try {
      writeFileSync(path, Buffer.concat([...parts, chunk]));
      parts.push(chunk);
    } catch {
      writeFileSync(path, Buffer.concat(parts));
      return path;
    }
  }
}

const info: StreamInfo = {
  sampleRate: 4000,
  channels: [
    { name: 'a', unit: 'V', scale: 1, fullScaleCounts: Infinity },
    { name: 'b', unit: 'V', scale: 1, fullScaleCounts: Infinity },
  ],
  source: { kind: 'simulator', label: 'disk-full test' },
  firstSample: 0,
  startWallTime: '2026-01-01T00:00:00.000Z',
};

describe('a full disk', () => {
  it('closes handles, frees space on delete, and resumes recording by itself with events saying so', () => {
    const mnt = smallDisk(256);
    const folder = ensureDataFolder(dataFolderAt(mnt));
    const p = new Pipeline({ analysis: { segment: 256 }, mode: 'lossless' });
    const recorder = new Recorder(folder, { durable: false, retryMs: 0, rotateSeconds: 0 });
    recorder.attach(p);
    const events: FloorlineEvent[] = [];
    p.on('event', (e) => events.push(e));
    p.info(info);
    recorder.startRecording();
    const rng = new SeededRandom(8);
    const a = new Float64Array(4000);
    const b = new Float64Array(4000);
    let first = 0;
    const feed = (blocks: number) => {
      for (let i = 0; i < blocks; i++) {
        rng.fillGaussian(a, 1e-3);
        rng.fillGaussian(b, 1e-3);
        p.block({ firstSample: first, frames: 4000, data: [a, b] });
        first += 4000;
      }
    };
    feed(12); // 12 s × 32 kB/s: far more than 256 KiB
    expect(recorder.status().state).toBe('failed');
    expect(events.filter((e) => e.rule === 'recording' && e.state === 'raised')).toHaveLength(1);
    // Deleting the recording frees its space only if no handle still holds it.
    const freeBefore = statfsSync(mnt).bfree;
    for (const f of readdirSync(folder.recordings)) rmSync(join(folder.recordings, f));
    const freed = (statfsSync(mnt).bfree - freeBefore) * statfsSync(mnt).bsize;
    expect(freed).toBeGreaterThan(100 * 1024);
    feed(2);
    expect(recorder.status().state).toBe('recording');
    const resumed = events.find((e) => e.rule === 'recording' && e.state === 'cleared');
    expect(resumed?.detail).toMatch(
      /recording resumed in recordings\/.*the disk has room again; samples \d+…\d+ are not in the recording/,
    );
    recorder.close();
    // No file is left without samples (a header-only WAV from a failed open is no recording).
    for (const f of readdirSync(folder.recordings).filter((n) => n.endsWith('.wav'))) {
      expect(readFileSync(join(folder.recordings, f)).length, f).toBeGreaterThan(200);
    }
  });

  it('leaves no capture file when the disk has no room for its header', () => {
    const mnt = smallDisk(64);
    const folder = ensureDataFolder(dataFolderAt(mnt));
    const p = new Pipeline({ analysis: { segment: 256 }, mode: 'lossless' });
    const recorder = new Recorder(folder, { durable: false, preSeconds: 1, postSeconds: 1 });
    recorder.attach(p);
    p.info(info);
    p.block({ firstSample: 0, frames: 4000, data: [new Float64Array(4000), new Float64Array(4000)] });
    fill(mnt);
    const h = recorder.capture(2000, 'test');
    p.block({ firstSample: 4000, frames: 4000, data: [new Float64Array(4000), new Float64Array(4000)] });
    recorder.close();
    expect(existsSync(join(mnt, h.file))).toBe(false);
    expect(readdirSync(folder.recordings)).toEqual([]);
  });

  it('keeps whole lines in the event log, the other target unaffected, and writes the held events once there is room', () => {
    const mnt = smallDisk(64);
    const other = join(tempDir('events-other'), 'events.jsonl');
    const warnings: string[] = [];
    const log = new EventLog([join(mnt, 'events.jsonl'), other], { warn: (m) => warnings.push(m) });
    const filler = fill(mnt);
    const event = (i: number): FloorlineEvent => ({
      kind: 'info',
      rule: 'gap',
      state: 'raised',
      channel: '*',
      sample: i,
      t: i,
      wallTime: '2026-01-01T00:00:00.000Z',
      detail: 'x'.repeat(300),
    });
    for (let i = 0; i < 15; i++) log.write(event(i));
    expect(
      readFileSync(other, 'utf8')
        .trim()
        .split('\n')
        .map((l) => JSON.parse(l).sample),
    ).toEqual([...Array(15).keys()]);
    const full = readFileSync(join(mnt, 'events.jsonl'), 'utf8');
    expect(full === '' || full.endsWith('\n')).toBe(true); // never a torn line
    expect(log.problems()[0]).toMatchObject({ error: 'ENOSPC', held: 15 - full.split('\n').filter(Boolean).length });
    expect(warnings.join('\n')).toMatch(/cannot write \(ENOSPC\); holding events in memory/);
    rmSync(filler);
    log.write(event(15));
    log.close();
    expect(
      readFileSync(join(mnt, 'events.jsonl'), 'utf8')
        .trim()
        .split('\n')
        .map((l) => JSON.parse(l).sample),
    ).toEqual([...Array(16).keys()]);
    expect(warnings.join('\n')).toMatch(/writing again after "ENOSPC"/);
  });
});

describe('the event log', () => {
  it('cuts a torn last line left by a crash when it opens', () => {
    const path = join(tempDir('torn'), 'events.jsonl');
    writeFileSync(path, '{"a":1}\n{"b":');
    const log = new EventLog([path]);
    log.write({
      kind: 'info',
      rule: 'gap',
      state: 'raised',
      channel: '*',
      sample: 1,
      t: 1,
      wallTime: '2026-01-01T00:00:00.000Z',
      detail: 'd',
    });
    log.close();
    const lines = readFileSync(path, 'utf8').trim().split('\n');
    expect(lines.map((l) => JSON.parse(l))).toHaveLength(2);
  });

  it('rotates a target past maxBytes, keeping a bounded number of older files', () => {
    const dir = tempDir('rotate');
    const path = join(dir, 'events.jsonl');
    const log = new EventLog([path], { maxBytes: 2000, keep: 2 });
    for (let i = 0; i < 100; i++)
      log.write({
        kind: 'info',
        rule: 'gap',
        state: 'raised',
        channel: '*',
        sample: i,
        t: i,
        wallTime: '2026-01-01T00:00:00.000Z',
        detail: 'y'.repeat(100),
      });
    log.close();
    expect(readdirSync(dir).sort()).toEqual(['events.jsonl', 'events.jsonl.1', 'events.jsonl.2']);
    for (const f of readdirSync(dir)) expect(readFileSync(join(dir, f)).length).toBeLessThanOrEqual(2000);
  });
});
