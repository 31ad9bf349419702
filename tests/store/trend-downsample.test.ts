// Downsampling a trend to a pixel width (`points`) keeps its breaks: a span with no rows stays a gap row however
// far the rows are merged, and a merged row's RMS is the square root of the segment-weighted mean power (the
// definition of RMS over the merged interval, common practice).
import { mkdtempSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { openStoreForReading, openStoreForWriting } from '../../agent/store/open-store.ts';
import { HistoryWriter } from '../../agent/store/history-writer.ts';
import { levelSamples } from '../../agent/store/levels.ts';
import { LEVELS } from '../../agent/store/schema.ts';
import { queryTrend } from '../../agent/store/trend-query.ts';

const RATE = 1000;
const ROWS = 2000; // 1-min rows
const BREAK = [900, 1020]; // rows with no data: two hours

function seeded(): string {
  const path = join(mkdtempSync(join(tmpdir(), 'floorline-downsample-')), 'trend.sqlite');
  const warn = (m: string) => process.stderr.write(m + '\n');
  const db = openStoreForWriting(path, warn);
  const writer = new HistoryWriter(db, { warn });
  const lengths = levelSamples(RATE, 500);
  writer.beginRun({
    command: 'run',
    source: 'test',
    sampleRate: RATE,
    firstSample: 0,
    startWallMs: 1.7e12,
    settings: {},
    levelSamples: lengths,
  });
  const s = writer.seriesId('a', 'floorDensity', null, 'V');
  for (let k = 0; k < ROWS; k++) {
    if (k >= BREAK[0] && k < BREAK[1]) continue;
    const v = 1e-6 * (1 + (k % 7) / 10);
    writer.rows.push(
      LEVELS.indexOf('1m'),
      s,
      k,
      1 + (k % 3),
      v * v,
      0.9 * v,
      1.1 * v,
      k * lengths['1m'],
      (k + 1) * lengths['1m'] - 1,
    );
  }
  writer.flush(0);
  writer.close();
  db.close();
  return path;
}

describe('trend downsampling', () => {
  const path = seeded();
  const db = openStoreForReading(path);
  const full = queryTrend(db, { every: '1m' }).series[0].rows;
  const breakStart = full.findIndex((r) => r.gap);

  it('has one gap row at the break in the full rows', () => {
    expect(full.length).toBe(ROWS - (BREAK[1] - BREAK[0]) + 1);
    expect(full[breakStart].sample).toBe(BREAK[0] * 60 * RATE);
    expect(full.filter((r) => r.gap).length).toBe(1);
  });

  for (const points of [500, 50, 7]) {
    it(`keeps the break as a gap row at ${points} points, within ${points} rows`, () => {
      const rows = queryTrend(db, { every: '1m', points }).series[0].rows;
      expect(rows.length).toBeLessThanOrEqual(points);
      const gap = rows.find((r) => r.gap);
      expect(gap?.sample).toBe(BREAK[0] * 60 * RATE);
      // No merged row reaches across the break: rows before it start before it, rows after start after its end.
      const after = rows.filter((r) => !r.gap && r.sample >= BREAK[0] * 60 * RATE);
      for (const r of after) expect(r.sample).toBeGreaterThanOrEqual(BREAK[1] * 60 * RATE);
    });
  }

  it('gives a merged row the RMS of its members weighted by their segment counts', () => {
    const rows = queryTrend(db, { every: '1m', points: 50 }).series[0].rows;
    const first = rows[0];
    const next = rows.find((r) => r.sample > first.sample)!;
    const members = [];
    for (let k = 0; k * 60 * RATE < next.sample; k++) members.push(k);
    const n = (k: number) => 1 + (k % 3);
    const v = (k: number) => 1e-6 * (1 + (k % 7) / 10);
    const power = members.reduce((a, k) => a + n(k) * v(k) ** 2, 0) / members.reduce((a, k) => a + n(k), 0);
    expect(Math.abs(first.mean! / Math.sqrt(power) - 1)).toBeLessThan(1e-12);
    expect(first.min).toBeCloseTo(0.9 * Math.min(...members.map(v)), 18);
    expect(first.max).toBeCloseTo(1.1 * Math.max(...members.map(v)), 18);
  });

  it('falls back to equal groups when there is no room for every break (points 2)', () => {
    const rows = queryTrend(db, { every: '1m', points: 2 }).series[0].rows;
    expect(rows.length).toBeLessThanOrEqual(2);
  });
});
