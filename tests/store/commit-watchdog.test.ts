// The commit watchdog on a real store file and writer, its clock given: rows waiting past the limit is a stall,
// told once however often it is checked; a real commit ends it (told as well) and the rows are in the file as
// python's sqlite3 reads it; nothing waiting is no stall.
import { join } from 'node:path';
import { afterAll, describe, expect, it } from 'vitest';
import { Python, tempDir } from '../wav/support.ts';
import { openStoreForWriting } from '../../agent/store/open-store.ts';
import { HistoryWriter } from '../../agent/store/history-writer.ts';
import { CommitWatchdog } from '../../agent/store/commit-watchdog.ts';

const LIMIT = 10_000;
let py: Python | undefined;
afterAll(() => py?.close());

describe('CommitWatchdog', () => {
  it('tells a stall once, and its end after a real commit that stored the waiting rows', async () => {
    const path = join(tempDir('commit-watchdog'), 'w.sqlite');
    const db = openStoreForWriting(path, () => {});
    const writer = new HistoryWriter(db, { warn: () => {} });
    const told: [string, boolean][] = [];
    const dog = new CommitWatchdog(writer, { file: path, stallMs: LIMIT, report: (d, s) => told.push([d, s]) });
    const t0 = writer.lastCommitMs;
    // Nothing waiting: however long since the last commit, nothing is lost.
    dog.check(t0 + 5 * LIMIT);
    expect(told).toEqual([]);
    writer.note({ sample: 10, t: 0.01, wallTime: '2026-12-03T12:00:00.000Z', text: 'waits for a commit' });
    expect(writer.pending).toBe(1);
    dog.check(t0 + LIMIT); // at the limit, not past it
    expect(told).toEqual([]);
    dog.check(t0 + LIMIT + 1);
    dog.check(t0 + 2 * LIMIT);
    expect(told.map(([, s]) => s)).toEqual([true]);
    expect(told[0][0]).toContain(`history store ${path} has not committed for 10.0 s`);
    expect(dog.status()).toMatchObject({ file: path, storing: true, stalled: true, commitStalls: 1, pending: 1 });
    writer.flush();
    dog.check(writer.lastCommitMs + 1);
    expect(told.map(([, s]) => s)).toEqual([true, false]);
    expect(dog.status()).toMatchObject({ stalled: false, commitStalls: 1, pending: 0 });
    expect(Date.parse(dog.status().lastCommit!)).toBeGreaterThan(0);
    writer.close();
    db.close();
    py ??= new Python();
    const notes = await py.run<string[]>(
      `import sqlite3\nresult = [r[0] for r in sqlite3.connect(args[0]).execute('select text from notes')]`,
      path,
    );
    expect(notes).toEqual(['waits for a commit']);
  });
});
