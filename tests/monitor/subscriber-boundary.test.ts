// The last line of defence: a throw injected into each subscriber (the recorder on the pipeline; the history
// store, notifier, disk retention and the dashboard server as monitor parts) is caught at its boundary. The part
// is disabled as a whole, an `internal` event names it (with the error's code) once, and acquisition, spectra and
// the other subscribers go on.
import { afterAll, describe, expect, it } from 'vitest';
import { mkdtempSync, readFileSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { Pipeline } from '../../agent/pipeline/pipeline.ts';
import { Recorder } from '../../agent/recorder/recorder.ts';
import { dataFolderAt, ensureDataFolder } from '../../agent/config/data-folder.ts';
import { PartHost, type MonitorPart } from '../../agent/monitor/parts.ts';
import { Monitor } from '../../agent/monitor/monitor.ts';
import { ReplaySource } from '../../agent/sources/replay.ts';
import { TrendSampler } from '../../agent/store/trend-sampler.ts';
import { Notifier } from '../../agent/notify/notifier.ts';
import { RetentionKeeper } from '../../agent/retention/retention.ts';
import { testMonitorOptions } from '../support/monitor-options.ts';
import type { FloorlineEvent } from '../../protocol/events.ts';
import type { StreamInfo } from '../../protocol/stream.ts';
import { SeededRandom } from '../../dsp/random.ts';

const dir = mkdtempSync(join(tmpdir(), 'floorline-boundary-'));
afterAll(() => rmSync(dir, { recursive: true, force: true }));

const info: StreamInfo = {
  sampleRate: 1000,
  channels: [{ name: 'a', unit: 'V', scale: 1, fullScaleCounts: Infinity }],
  source: { kind: 'simulator', label: 'boundary test' },
  firstSample: 0,
  startWallTime: '2026-01-01T00:00:00.000Z',
};

function disk(message: string): Error {
  return Object.assign(new Error(message), { code: 'ENOSPC' });
}

let calls = 0;

/** Makes one method of a real part throw a disk error, counting the calls; returns the undo. */
function failOn<T extends object>(proto: T, method: keyof T & string): () => void {
  const original = Object.getOwnPropertyDescriptor(proto, method)!;
  Object.defineProperty(proto, method, {
    ...original,
    value: () => {
      calls++;
      throw disk(`injected ${method} fault`);
    },
  });
  return () => Object.defineProperty(proto, method, original);
}

const demo = new URL('../../recordings/demo.wav', import.meta.url).pathname;

/** The demo recording at full speed through a monitor with the history store, a notifier and disk retention. */
async function replayWithParts(name: string) {
  const data = join(dir, name.replace(/\W/g, '-'));
  const lines: string[] = [];
  const m = new Monitor(
    new ReplaySource(demo, { speed: 'max' }),
    testMonitorOptions(data, {
      record: true,
      history: { path: join(data, 'floorline.sqlite'), source: 'demo' },
      notify: [{ exec: ['/bin/true'] }],
      retention: { recordings: { maxBytes: 1e12 } },
      log: (l) => lines.push(l),
    }),
  );
  await m.prepare();
  let parts: string[] = [];
  m.attach({ name: 'probe', onEnd: () => void (parts = m.partNames()) }); // the parts still on at the end
  await m.start();
  await m.finished;
  const events = readFileSync(join(data, 'events.jsonl'), 'utf8')
    .trim()
    .split('\n')
    .map((l) => JSON.parse(l) as FloorlineEvent);
  return { parts, events, lines, digest: m.digest.hex(), samples: m.pipeline.counters().samples };
}

/** Runs 10 s of noise; `breakAt` (a block index) is when the injected fault starts. */
function run(
  p: Pipeline,
  onBlock?: (i: number) => void,
): { events: FloorlineEvent[]; blocksSeen: number; snapshots: number } {
  const events: FloorlineEvent[] = [];
  let blocksSeen = 0;
  let snapshots = 0;
  p.on('event', (e) => events.push(e));
  p.on('block', () => blocksSeen++);
  p.on('snapshot', () => snapshots++);
  p.info(info);
  const rng = new SeededRandom(6);
  const x = new Float64Array(1000);
  for (let i = 0; i < 10; i++) {
    onBlock?.(i);
    rng.fillGaussian(x, 1e-3);
    p.block({ firstSample: i * 1000, frames: 1000, data: [x] });
  }
  p.end();
  return { events, blocksSeen, snapshots };
}

function expectCutOff(r: ReturnType<typeof run>, owner: RegExp): void {
  expect(r.blocksSeen).toBe(10); // acquisition went on, the other subscribers too
  expect(r.snapshots).toBeGreaterThan(50);
  const internal = r.events.filter((e) => e.rule === 'internal');
  expect(internal).toHaveLength(1); // once, not once per block
  expect(internal[0].detail).toMatch(owner);
  expect(internal[0].detail).toMatch(/\(ENOSPC\) and was disabled/);
}

describe('a subscriber that throws', () => {
  it('recorder: cut off, the rest goes on', () => {
    const p = new Pipeline({ analysis: { segment: 256 }, mode: 'lossless' });
    const rec = new Recorder(ensureDataFolder(dataFolderAt(join(dir, 'rec'))), { durable: false });
    rec.attach(p);
    let calls = 0;
    (rec as unknown as { onBlock: () => void }).onBlock = () => {
      calls++;
      throw disk('injected recorder fault');
    };
    const r = run(p);
    rec.close();
    expect(calls).toBe(1); // disabled after the first throw
    expectCutOff(r, /^recorder failed on 'block'/);
  });

  // The history store, the notifier and disk retention are monitor parts: each runs behind the part boundary.
  // The reference is the same replay without the fault (same spectra digest, same alarm events).
  const partCases: { part: string; inject: () => () => void }[] = [
    { part: 'history store', inject: () => failOn(TrendSampler.prototype, 'onSnapshot') },
    { part: 'notifier', inject: () => failOn(Notifier.prototype, 'tick') },
    { part: 'retention', inject: () => failOn(RetentionKeeper.prototype, 'sweep') },
  ];
  for (const c of partCases) {
    it(`${c.part}: a throwing subscriber does not stop the monitor and is reported once`, async () => {
      const plain = await replayWithParts(`${c.part}-plain`);
      calls = 0;
      const restore = c.inject();
      let faulty: Awaited<ReturnType<typeof replayWithParts>>;
      try {
        faulty = await replayWithParts(`${c.part}-faulty`);
      } finally {
        restore();
      }
      expect(calls).toBe(1); // disabled after its first throw, never called again
      expect(faulty.parts).not.toContain(c.part);
      expect(faulty.parts).toEqual(plain.parts.filter((n) => n !== c.part)); // the other parts run on
      const internal = faulty.events.filter((e) => e.rule === 'internal');
      expect(internal).toHaveLength(1); // once, not once per snapshot or sweep
      expect(internal[0].detail).toMatch(new RegExp(`^part ${c.part} failed in \\w+ \\(ENOSPC\\) and was disabled`));
      expect(faulty.lines.filter((l) => l.includes(`part ${c.part} failed`))).toHaveLength(1);
      // Acquisition and analysis went on to the end of the recording, unchanged.
      expect(faulty.samples).toBe(plain.samples);
      expect(faulty.digest).toBe(plain.digest);
      const alarms = (es: FloorlineEvent[]) =>
        es.filter((e) => e.kind === 'alarm').map((e) => `${e.rule} ${e.state} ${e.channel} ${e.sample}`);
      expect(alarms(faulty.events)).toEqual(alarms(plain.events));
      expect(alarms(plain.events).length).toBeGreaterThan(0); // the demo's scripted faults raise alarms
    });
  }

  it('a monitor part (the dashboard server attaches as one): disabled, the other parts go on', () => {
    const failures: string[] = [];
    const host = new PartHost((part, where, err) => failures.push(`${part.name} ${where} ${err.message}`));
    let other = 0;
    let broken = 0;
    const server: MonitorPart = {
      name: 'dashboard',
      onSnapshot: () => {
        broken++;
        throw disk('injected server fault');
      },
    };
    const store: MonitorPart = { name: 'other', onSnapshot: () => void other++ };
    host.add(server);
    host.add(store);
    for (let i = 0; i < 5; i++) host.call('onSnapshot', {} as never);
    expect(failures).toEqual(['dashboard onSnapshot injected server fault']);
    expect(broken).toBe(1);
    expect(other).toBe(5);
  });
});
