// A baseline taken while a fault is on replaces the alarm rules: the alarms raised under the old rules are cleared
// and their incidents ended at the swap (with the reason in the cleared events), in the event stream and in the
// store file as python's sqlite3 reads it. Before this, such incidents stayed open (end NULL) forever.
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { Python, root, tempDir } from '../wav/support.ts';
import { startMonitor } from '../../agent/monitor/monitor.ts';
import { ReplaySource } from '../../agent/sources/replay.ts';
import { readBaseline } from '../../agent/baseline/format.ts';
import type { FloorlineEvent } from '../../protocol/events.ts';
import { testMonitorOptions } from '../support/monitor-options.ts';

const demoBaseline = join(root, 'recordings/demo-baseline.json');
const RATE = 8000; // recordings/README.md: the demo is 8000 S/s
let dir: string;
let store: string;
let py: Python;
const events: FloorlineEvent[] = [];
let alarmsAtEnd: { state: string; incident?: string }[] = [];

beforeAll(async () => {
  dir = tempDir('store-baseline-swap');
  store = join(dir, 'floorline.sqlite');
  py = new Python();
  // Five times real time: the swap lands within a block of the capture's end (at 'max' the replay runs on while
  // the baseline file is written, so the swap's time would depend on the machine's load).
  const src = new ReplaySource(join(root, 'recordings/demo.wav'), { speed: 5 });
  const m = await startMonitor(
    src,
    testMonitorOptions(dir, {
      baseline: { baseline: await readBaseline(demoBaseline), where: demoBaseline },
      history: { path: store, source: 'demo' },
      lowFrequency: false,
    }),
  );
  // The capture starts at the first mains raise, so the swap comes while the pickup is still on (it runs from 20 s
  // to the end of the recording, recordings/README.md).
  let capture: Promise<unknown> | undefined;
  m.pipeline.on('event', (e: FloorlineEvent) => {
    events.push(e);
    if (!capture && e.rule === 'mains' && e.state === 'raised')
      capture = m.captureBaseline({ seconds: 3, name: 'during-mains.json' });
  });
  await m.finished;
  await capture;
  alarmsAtEnd = m.status().alarms;
}, 120_000);

afterAll(() => py?.close());

describe('incidents when a new baseline replaces the alarm rules', () => {
  it('clears every alarm raised before the swap and ends its incident there, saying why', () => {
    const swap = events.find((e) => e.rule === 'baseline' && e.state === 'raised');
    expect(swap, 'the baseline swap event').toBeDefined();
    // The scripted pickup starts at 20 s: the swap (a raise, then 3 s of capture) comes after it.
    expect(swap!.t).toBeGreaterThan(20);
    const before = events.filter((e) => e.kind === 'alarm' && e.state === 'raised' && e.sample < swap!.sample);
    expect(before.some((e) => e.rule === 'mains')).toBe(true);
    const forced = events.filter((e) => e.state === 'cleared' && e.detail.includes('closed without a judged end'));
    for (const r of before) {
      const clear = events.find(
        (e) =>
          e.state === 'cleared' &&
          e.rule === r.rule &&
          e.channel === r.channel &&
          e.frequency === r.frequency &&
          e.sample >= r.sample,
      );
      expect(clear, `a clear for ${r.detail}`).toBeDefined();
      expect(clear!.incident).toBe(r.incident);
    }
    expect(forced.length).toBeGreaterThan(0);
    for (const e of forced) {
      expect(e.sample).toBeGreaterThanOrEqual(swap!.sample);
      expect(e.detail).toContain('the alarm rules restarted on baseline baselines/during-mains.json');
      expect(e.durationSeconds).toBeGreaterThanOrEqual(0);
    }
    // The mains pickup was still on at the swap (scripted to the end), so its clear is the forced one, with a peak.
    const mains = forced.filter((e) => e.rule === 'mains');
    expect(mains.length).toBeGreaterThan(0);
    for (const e of mains) {
      expect(e.sample).toBe(swap!.sample);
      expect(e.peakLevelDb).toBeGreaterThan(0);
      expect(e.detail).toContain(`peak ${e.peakLevelDb} dB`);
      // Raised after the scripted start at 20 s, and on until the swap.
      expect(e.durationSeconds!).toBeCloseTo(
        (e.sample - before.find((r) => r.incident === e.incident && r.frequency === e.frequency)!.sample) / RATE,
        6,
      );
    }
    // No row of the alarm table still shows an alarm of the old rules as raised.
    const oldIncidents = new Set(before.map((e) => e.incident));
    expect(alarmsAtEnd.filter((a) => a.state === 'raised' && oldIncidents.has(a.incident))).toEqual([]);
  });

  it('the store (python sqlite3) holds those incidents ended at the swap, and the reason in their events', async () => {
    const swap = events.find((e) => e.rule === 'baseline' && e.state === 'raised')!;
    const rows = await py.run<{ id: string; start: number; end: number | null; reasons: number }[]>(
      `import sqlite3
db = sqlite3.connect(args[0])
assert db.execute('pragma integrity_check').fetchone()[0] == 'ok'
result = [{"id": i, "start": s, "end": e, "reasons": db.execute(
    "select count(*) from events where incident = ? and state = 'cleared' and json like '%closed without a judged end%'",
    (i,)).fetchone()[0]}
  for i, s, e in db.execute('select id, start_sample, end_sample from incidents where start_sample < ? order by start_sample', (args[1],))]`,
      store,
      swap.sample,
    );
    expect(rows.length).toBeGreaterThan(0);
    for (const r of rows) {
      expect(r.end, `incident ${r.id} has an end`).not.toBeNull();
      expect(r.end!).toBeGreaterThanOrEqual(r.start);
    }
    const mains = rows.find((r) => r.id.startsWith('mains-bridge-'));
    expect(mains?.end).toBe(swap.sample);
    expect(mains!.reasons).toBeGreaterThan(0);
    // Stamped in sample time of the 8000 S/s recording.
    expect(mains!.end! / RATE).toBeCloseTo(swap.t, 9);
  });
});
