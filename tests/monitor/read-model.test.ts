// The monitor's read model: the alarm table named by stable ids, the band table from a snapshot, and the part
// boundary (a part that throws is disabled; acquisition and the event log go on unchanged).
import { describe, expect, it } from 'vitest';
import { mkdtempSync, readFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import type { FloorlineEvent } from '../../protocol/events.ts';
import { alarmId, bandEdge, bandId } from '../../protocol/ids.ts';
import { AlarmTable, MAX_ALARM_ROWS } from '../../agent/monitor/alarm-table.ts';
import { BandTable } from '../../agent/monitor/band-table.ts';
import { startMonitor } from '../../agent/monitor/monitor.ts';
import { ReplaySource } from '../../agent/sources/replay.ts';
import type { SpectrumSnapshot } from '../../agent/pipeline/types.ts';
import { testMonitorOptions } from '../support/monitor-options.ts';

const root = new URL('../../', import.meta.url).pathname;

function event(
  rule: FloorlineEvent['rule'],
  state: FloorlineEvent['state'],
  extra: Partial<FloorlineEvent> = {},
): FloorlineEvent {
  return {
    kind: 'alarm',
    rule,
    state,
    channel: 'ch0',
    sample: 100,
    t: 0.0125,
    wallTime: '2026-01-01T00:00:00.000Z',
    detail: '',
    ...extra,
  };
}

describe('alarm table', () => {
  it('keeps one row per mains harmonic, keeps an acknowledgement while raised and asks again after a clear', () => {
    const t = new AlarmTable();
    t.onEvent(event('mains', 'raised', { harmonic: 1, frequency: 50.01 }));
    t.onEvent(event('mains', 'raised', { harmonic: 3, frequency: 150.02 }));
    expect(t.all().map((r) => r.id)).toEqual(['mains/ch0/h1', 'mains/ch0/h3']);
    t.markAcknowledged(t.get('mains/ch0/h1')!); // one line's id: that line only
    expect(t.all().map((a) => a.acknowledged)).toEqual([true, false]);
    t.onEvent(event('mains', 'raised', { harmonic: 1, frequency: 50.02 })); // a repeat while raised
    expect(t.get('mains/ch0/h1')?.acknowledged).toBe(true);
    t.onEvent(event('mains', 'cleared', { harmonic: 3, frequency: 150.02 }));
    t.onEvent(event('mains', 'raised', { harmonic: 3, frequency: 150.03 })); // raised again after clearing
    expect(t.get('mains/ch0/h3')?.acknowledged).toBe(false);
  });

  it('names a band alarm by the id of the band, whether from the rule’s exact edges or an event’s rounded ones', () => {
    const exact: [number, number] = [5.859375, 3998.046875];
    const rounded: [number, number] = [bandEdge(exact[0]), bandEdge(exact[1])];
    expect(rounded).toEqual([5.85938, 3998.05]); // 6 significant digits, as events carry them
    const t = new AlarmTable();
    t.onEvent(event('band-rise', 'raised', { band: rounded }));
    expect(t.all()[0].id).toBe(`band-rise/${bandId('ch0', exact[0], exact[1])}`);
    expect(alarmId({ rule: 'band-rise', channel: 'ch0', band: exact })).toBe(t.all()[0].id);
    // A neighbouring band one part in 10⁵ away is another alarm.
    expect(alarmId({ rule: 'band-rise', channel: 'ch0', band: [5.859375, 3998.09] })).not.toBe(t.all()[0].id);
  });
});

describe('band table', () => {
  it('computes band RMS as sqrt(Σ psd · binHz) over the band’s bins (common practice), and the band floor as the median density', () => {
    const settings = { sampleRate: 8000, segment: 1024, window: 'hann', overlap: 0.5, detrend: 'mean' as const };
    const psd = new Float64Array(513).fill(4e-16);
    psd[100] = 4e-12; // a line: moves the RMS, not the median floor
    const snapshot = {
      sample: 7999,
      t: 1,
      wallTime: '',
      sequence: 0,
      settings,
      averaging: { mode: 'mean' },
      frequencies: new Float64Array(513),
      binHz: 8000 / 1024,
      nenbw: 1.5,
      enbwHz: 11.72,
      channels: [
        {
          name: 'ch0',
          unit: 'V',
          psd,
          segmentsUsed: 15,
          segmentsTotal: 15,
          equivalentAverages: 14,
          lastSegmentSample: 7999,
        },
      ],
    } as unknown as SpectrumSnapshot;
    const rows = new BandTable().rows({
      snapshot,
      baseline: undefined,
      rules: undefined,
      bandsOf: () => [{ low: 5.859375, high: 3998.046875 }],
      raised: () => false,
    });
    // Bins with 5.859375 ≤ k·7.8125 ≤ 3998.046875: k = 1..511.
    expect(rows[0].rms).toBeCloseTo(Math.sqrt((510 * 4e-16 + 4e-12) * 7.8125), 15);
    expect(rows[0].floorDensity).toBeCloseTo(2e-8, 20);
    expect(rows[0].state).toBe('no-baseline');
    expect(rows[0].id).toBe('ch0:5.85938-3998.05');
  });
});

describe('monitor parts', () => {
  it('disables a part that throws, says so in an internal event, and leaves spectra and the alarm events as they were', async () => {
    const run = async (withFaulty: boolean) => {
      const dir = mkdtempSync(join(tmpdir(), 'floorline-parts-'));
      const seen: string[] = [];
      let calls = 0;
      const faulty = {
        name: 'faulty',
        onSnapshot: () => {
          calls++;
          if (calls === 5) throw new Error('disk on fire');
        },
      };
      const after = { name: 'after', onEvent: (e: FloorlineEvent) => void seen.push(e.rule) };
      const src = new ReplaySource(join(root, 'recordings/demo.wav'), { speed: 'max' });
      const lines: string[] = [];
      const m = await startMonitor(
        src,
        testMonitorOptions(dir, { parts: withFaulty ? [faulty, after] : [after], log: (l) => lines.push(l) }),
      );
      await src.done;
      await m.finished;
      const events = readFileSync(join(dir, 'events.jsonl'), 'utf8')
        .trim()
        .split('\n')
        .map((l) => JSON.parse(l) as FloorlineEvent);
      return { digest: m.digest.hex(), events, calls, lines, seen, parts: m.partNames() };
    };
    const plain = await run(false);
    const faulty = await run(true);
    expect(faulty.calls).toBe(5); // never called again after it threw
    expect(faulty.parts).toEqual(['after']);
    expect(faulty.lines.some((l) => /part faulty failed in onSnapshot .*disk on fire/.test(l))).toBe(true);
    const internal = faulty.events.filter((e) => e.rule === 'internal');
    expect(internal).toHaveLength(1);
    expect(internal[0].kind).toBe('info');
    expect(faulty.digest).toBe(plain.digest);
    const strip = (es: FloorlineEvent[]) =>
      es.filter((e) => e.rule !== 'internal').map((e) => ({ ...e, wallTime: '' }));
    expect(strip(faulty.events)).toEqual(strip(plain.events));
    expect(faulty.seen).toContain('internal'); // the other parts hear about it
  });
});

describe('monitor incidents', () => {
  it("acknowledges every mains harmonic of the demo's ground loop with one incident id, and leaves the shorted channel's spur asking", async () => {
    const dir = mkdtempSync(join(tmpdir(), 'floorline-incident-ack-'));
    const src = new ReplaySource(join(root, 'recordings/demo.wav'), { speed: 'max', loop: false });
    const m = await startMonitor(src, testMonitorOptions(dir));
    await src.done;
    await m.finished;
    const events = readFileSync(join(dir, 'events.jsonl'), 'utf8')
      .trim()
      .split('\n')
      .map((l) => JSON.parse(l) as FloorlineEvent);
    const mains = events.filter((e) => e.rule === 'mains' && e.state === 'raised');
    // Harmonics of one fundamental on one channel (k × f, a fact of the trade) are one fault: one incident.
    expect(mains.length).toBeGreaterThan(1);
    const ids = new Set(mains.map((e) => e.incident));
    expect(ids.size).toBe(1);
    const [id] = ids;
    expect(m.acknowledge(id!)).toBe(true);
    const rows = m.status().alarms;
    for (const e of mains) expect(rows.find((r) => r.id === alarmId(e))?.acknowledged).toBe(true);
    const spur = rows.filter((r) => r.rule === 'spur' && r.channel === 'shorted' && r.state === 'raised');
    expect(spur.length).toBeGreaterThan(0);
    expect(spur.every((r) => !r.acknowledged)).toBe(true);
  });
});

describe('acknowledge and shelve by alarm id', () => {
  it("touch only the line the id names: the demo's 1953 Hz spur, not its 3906 Hz harmonic", async () => {
    const dir = mkdtempSync(join(tmpdir(), 'floorline-line-ack-'));
    const src = new ReplaySource(join(root, 'recordings/demo.wav'), { speed: 'max', loop: false });
    const m = await startMonitor(src, testMonitorOptions(dir));
    await src.done;
    await m.finished;
    const spur = () =>
      m.status().alarms.filter((r) => r.rule === 'spur' && r.channel === 'shorted' && r.state === 'raised');
    // recordings/README.md scripts the board's regulator at 1953.3 Hz with its second harmonic at 3906.6 Hz.
    const [low, high] = [...spur()].sort((a, b) => a.frequency! - b.frequency!);
    expect(low.frequency).toBeCloseTo(1953.3, 0);
    expect(high.frequency).toBeCloseTo(3906.6, 0);
    expect(m.acknowledge(low.id)).toBe(true);
    expect(spur().map((r) => [r.id, r.acknowledged])).toEqual(
      expect.arrayContaining([
        [low.id, true],
        [high.id, false],
      ]),
    );
    // Shelving the other line by its id leaves the acknowledged one as it was.
    expect(m.shelve(high.id, 10 ** 9)).toBe(true);
    expect(spur().find((r) => r.id === low.id)?.acknowledged).toBe(true);
  });
});

describe('alarm table bound', () => {
  it('keeps every raised alarm but at most MAX_ALARM_ROWS rows, forgetting the oldest cleared ones', () => {
    const t = new AlarmTable();
    // 400 spur lines at distinct frequencies, each raised then cleared (the multi-day drift case), then 3 raised.
    for (let i = 0; i < 400; i++) {
      const f = 1000 + i * 0.37;
      t.onEvent(event('spur', 'raised', { frequency: f, sample: 2 * i }));
      t.onEvent(event('spur', 'cleared', { frequency: f, sample: 2 * i + 1 }));
    }
    for (let i = 0; i < 3; i++) t.onEvent(event('spur', 'raised', { frequency: 5000 + i, sample: 1000 + i }));
    const rows = t.all();
    expect(rows.length).toBe(MAX_ALARM_ROWS);
    expect(rows.filter((r) => r.state === 'raised')).toHaveLength(3);
    expect(Math.min(...rows.filter((r) => r.state === 'clear').map((r) => r.sample))).toBeGreaterThan(
      2 * (400 - MAX_ALARM_ROWS),
    );
    expect(t.forgotten).toBe(400 - MAX_ALARM_ROWS + 3);
  });
});
