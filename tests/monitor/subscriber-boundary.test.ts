// The last line of defence: a throw injected into each subscriber (recorder, history store, notifier, and a
// part such as the dashboard server) is caught at its boundary. The part is disabled as a whole, an `internal`
// event names it (with the error's code), and acquisition, spectra and the other subscribers go on.
import { afterAll, describe, expect, it } from 'vitest';
import { mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { Pipeline } from '../../agent/pipeline/pipeline.ts';
import { Recorder } from '../../agent/recorder/recorder.ts';
import { dataFolderAt, ensureDataFolder } from '../../agent/config/data-folder.ts';
import { attachHistory } from '../../agent/store/attach.ts';
import { attachNotifier } from '../../agent/notify/attach.ts';
import { PartHost, type MonitorPart } from '../../agent/monitor/parts.ts';
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

  it('history store: cut off, the rest goes on', () => {
    const p = new Pipeline({ analysis: { segment: 256 }, mode: 'lossless' });
    const h = attachHistory(p, {
      path: join(dir, 'store', 'h.sqlite'),
      command: 'replay',
      source: 'test',
      warn: () => undefined,
    });
    h.writer.event = () => {
      throw disk('injected store fault');
    };
    const r = run(p, (i) => {
      if (i === 3)
        p.emitEvent({
          kind: 'info',
          rule: 'gap',
          state: 'raised',
          channel: '*',
          sample: 2999,
          t: 3,
          wallTime: '2026-01-01T00:00:03.000Z',
          detail: 'trigger',
        });
    });
    h.close();
    expectCutOff(r, /^history store failed on 'event'/);
  });

  it('notifier: cut off, the rest goes on', async () => {
    const p = new Pipeline({ analysis: { segment: 256 }, mode: 'lossless' });
    const n = attachNotifier(p, join(dir), [{ exec: ['/bin/true'] }], () => undefined);
    n.offer = () => {
      throw disk('injected notifier fault');
    };
    const r = run(p, (i) => {
      if (i === 3)
        p.emitEvent({
          kind: 'info',
          rule: 'gap',
          state: 'raised',
          channel: '*',
          sample: 2999,
          t: 3,
          wallTime: '2026-01-01T00:00:03.000Z',
          detail: 'trigger',
        });
    });
    await n.close();
    expectCutOff(r, /^notifier failed on 'event'/);
  });

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
