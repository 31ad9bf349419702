// A history store that stops committing while samples arrive is told, not silent: a trigger added to the real
// store file through python's sqlite3 makes every commit fail inside the transaction (SQLite's RAISE(ABORT) in a
// trigger aborts the statement with SQLITE_CONSTRAINT, per the CREATE TRIGGER documentation: not a disk
// fault, so the store's part is cut off and nothing more is committed). The commit watchdog then says, once, that
// history is not being kept, names the file and the fix, raises an `internal` info event and counts the stall in
// status; the file stays sound (integrity check) and holds nothing after the stall.
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { Python, root, tempDir } from '../wav/support.ts';
import { startMonitor, type Monitor } from '../../agent/monitor/monitor.ts';
import { ReplaySource } from '../../agent/sources/replay.ts';
import type { FloorlineEvent } from '../../protocol/events.ts';
import { testMonitorOptions } from '../support/monitor-options.ts';

const STALL_MS = 2000;
let dir: string;
let store: string;
let py: Python;
const lines: string[] = [];
const events: FloorlineEvent[] = [];
let statusAtStall: ReturnType<Monitor['status']>['store'];
let rowsAtTrigger = 0;

async function until(what: string, ok: () => boolean | Promise<boolean>, ms = 60_000): Promise<void> {
  const end = Date.now() + ms;
  while (!(await ok())) {
    if (Date.now() > end) throw new Error(`timed out waiting for ${what}; agent said: ${lines.join(' | ')}`);
    await new Promise((r) => setTimeout(r, 100));
  }
}

const snapRows = () =>
  py.run<number>(
    `import sqlite3
db = sqlite3.connect(args[0], timeout=10)
result = db.execute('select count(*) from trend_snap').fetchone()[0]`,
    store,
  );

beforeAll(async () => {
  dir = tempDir('store-commit-stall');
  store = join(dir, 'floorline.sqlite');
  py = new Python();
  // Real time (speed 1): samples keep arriving on the wall clock the watchdog judges by.
  const src = new ReplaySource(join(root, 'recordings/demo.wav'), { speed: 1 });
  const m = await startMonitor(
    src,
    testMonitorOptions(dir, {
      history: { path: store, source: 'demo', stallMs: STALL_MS },
      log: (line) => lines.push(line),
    }),
  );
  m.pipeline.on('event', (e: FloorlineEvent) => events.push(e));
  try {
    await until('the first commit', async () => (await snapRows()) > 0);
    await py.run(
      `import sqlite3
db = sqlite3.connect(args[0], timeout=10)
db.execute("create trigger stall before insert on trend_snap begin select raise(abort, 'refused by the stall test'); end")
db.commit()`,
      store,
    );
    await until('the part to fail', () => lines.some((l) => l.includes('part history store failed in commit')));
    rowsAtTrigger = await snapRows();
    await until('the stall to be told', () => m.status().store?.stalled === true, 30_000);
    statusAtStall = m.status().store;
  } finally {
    await src.stop();
    await m.finished;
  }
}, 180_000);

afterAll(() => py?.close());

describe('history store commit watchdog', () => {
  it('says once that history is not being kept, naming the file and the fix', () => {
    const told = lines.filter((l) => l.includes('has not committed for'));
    expect(told.length, lines.join('\n')).toBe(1);
    expect(told[0]).toContain(`history store ${store}`);
    expect(told[0]).toContain('Restart the agent');
    // The limit is wall time without a commit while rows wait: the message quotes at least that much.
    const seconds = Number(/for ([\d.]+) s/.exec(told[0])![1]);
    expect(seconds).toBeGreaterThanOrEqual(STALL_MS / 1000); // quoted to 0.1 s
    const internal = events.filter((e) => e.rule === 'internal' && e.detail === told[0]);
    expect(internal.map((e) => [e.kind, e.state])).toEqual([['info', 'raised']]);
  });

  it('counts the stall in status, with the file, the rows waiting and the last commit', () => {
    expect(statusAtStall).toMatchObject({ file: store, storing: true, stalled: true, commitStalls: 1 });
    expect(statusAtStall!.pending).toBeGreaterThan(0);
    const last = Date.parse(statusAtStall!.lastCommit!);
    expect(Number.isFinite(last)).toBe(true);
  });

  it('the file (python sqlite3) is sound and holds nothing committed after the stall', async () => {
    const after = await py.run<{ ok: string; rows: number }>(
      `import sqlite3
db = sqlite3.connect(args[0], timeout=10)
result = {"ok": db.execute('pragma integrity_check').fetchone()[0], "rows": db.execute('select count(*) from trend_snap').fetchone()[0]}`,
      store,
    );
    expect(after.ok).toBe('ok');
    expect(rowsAtTrigger).toBeGreaterThan(0);
    expect(after.rows).toBe(rowsAtTrigger);
    // The close still released the store: its last commit failing is said, not thrown.
    expect(lines.some((l) => l.includes('the last commit at close failed'))).toBe(true);
  });
});
