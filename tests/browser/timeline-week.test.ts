// The timeline over a week, in real headless Chromium against a live `floorline run` (a real pty pair from socat,
// the simulator as the board) whose data folder holds a history store seeded with seven days of 1-min rows,
// incidents and a six-hour break. The page must show the week downsampled by the store to its pixel width, the
// break as a gap, every incident shaded, and the seeded levels unchanged by the way.
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { mkdirSync, mkdtempSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import type { BrowserContext, Page } from 'playwright-core';
import { launchChromium } from './support/browser.ts';
import { startAgent, type Agent } from './support/agent.ts';
import { PtyPair, startSimulator } from '../serial/pty-pair.ts';
import { openStoreForWriting } from '../../agent/store/open-store.ts';
import { HistoryWriter } from '../../agent/store/history-writer.ts';
import { levelSamples } from '../../agent/store/levels.ts';
import { LEVELS } from '../../agent/store/schema.ts';
import { waitUntil as pollPage } from './support/page.ts';

const root = new URL('../../', import.meta.url).pathname;
const dir = mkdtempSync(join(tmpdir(), 'floorline-timeline-week-'));
const RATE = 8000; // the demo scenario's rate (recordings/demo-scenario.json), which the simulator streams
const DAY = 86_400;
/** Floor density of each seeded day (V/√Hz): a step a day, so a row's day is told by its level. */
const dayLevel = (d: number): number => 6.5e-7 * (1 + 0.25 * d);
const BREAK = { from: 3 * DAY, to: 3 * DAY + 6 * 3600 }; // seconds into the seeded week with no rows
const INCIDENTS = 5;

let browser: BrowserContext;
let pair: PtyPair;
let agent: Agent;
let sim: ReturnType<typeof startSimulator>;
let url = '';
let weekStartMs = 0;

/** Seven days of 1-min floor-density rows for `bridge`, ending ten minutes ago, through the store's own writer. */
function seedStore(path: string): void {
  const warn = (m: string) => process.stderr.write(m + '\n');
  const db = openStoreForWriting(path, warn);
  const writer = new HistoryWriter(db, { warn });
  const lengths = levelSamples(RATE, 2048);
  weekStartMs = Date.now() - 7 * DAY * 1000 - 10 * 60 * 1000;
  writer.beginRun({
    command: 'run',
    source: 'seeded week (test)',
    sampleRate: RATE,
    firstSample: 0,
    startWallMs: weekStartMs,
    settings: { sampleRate: RATE, segment: 4096, window: 'hann', overlap: 0.5, detrend: 'mean' },
    levelSamples: lengths,
  });
  const series = writer.seriesId('bridge', 'floorDensity', null, 'V');
  const level = LEVELS.indexOf('1m');
  const len = lengths['1m'];
  for (let k = 0; k < (7 * DAY) / 60; k++) {
    const s = k * 60;
    if (s >= BREAK.from && s < BREAK.to) continue;
    const v = dayLevel(Math.floor(s / DAY));
    writer.rows.push(level, series, k, 20, v * v, 0.9 * v, 1.1 * v, k * len, (k + 1) * len - 1);
  }
  const stamp = (s: number) => ({ sample: s * RATE, t: s, wallTime: new Date(weekStartMs + s * 1000).toISOString() });
  for (let i = 0; i < INCIDENTS; i++) {
    const s = (i + 0.5) * DAY + 1800;
    writer.incident({
      id: `mains-bridge-s${s * RATE}`,
      channel: 'bridge',
      rules: ['mains'],
      members: [{ rule: 'mains', frequency: 50, harmonic: 1 }],
      start: stamp(s),
      end: stamp(s + 3600),
      settled: { levelDb: 20, amplitude: 3e-6, frequency: 50 },
      peak: { levelDb: 21, amplitude: 3.3e-6, sample: (s + 60) * RATE },
      acknowledged: false,
      capture: null,
    });
  }
  writer.flush(0);
  writer.close();
  db.close();
}

beforeAll(async () => {
  mkdirSync(join(dir, 'data'));
  seedStore(join(dir, 'data', 'floorline.sqlite'));
  pair = new PtyPair(join(dir, 'board'), join(dir, 'host'));
  await pair.start();
  agent = await startAgent(['run', '--port', pair.host, '--http-port', '0', '--data', join(dir, 'data')]);
  url = agent.url;
  sim = startSimulator([join(root, 'recordings/demo-scenario.json'), '--out', pair.board, '--duration', '120']);
  browser = await launchChromium({ width: 1600, height: 1200 });
}, 60_000);
afterAll(async () => {
  sim?.proc.kill('SIGTERM');
  await agent?.stop();
  await pair?.kill();
  await browser?.close();
});

const waitUntil = (page: Page, expression: string, timeoutMs: number) =>
  pollPage(page, expression, timeoutMs, () => agent.output());

interface Drawn {
  rows: { wall: number; mean: number | null; gap: boolean }[];
  width: number;
  incidents: string[];
  info: string;
  drawMs: number;
}

describe('timeline: a week from a seeded store', () => {
  it('draws the week downsampled to its width, the break as a gap, every incident shaded, the levels as seeded', async () => {
    const page = await browser.newPage();
    await page.goto(url);
    await waitUntil(page, 'window.floorline !== undefined && window.floorline.spectraApplied >= 1', 30_000);
    await page.selectOption('#timeline-channel', 'bridge');
    await page.selectOption('#timeline-what', 'floor');
    await page.selectOption('#timeline-span', 'week');
    await waitUntil(
      page,
      `(() => { const s = window.floorline.timeline.series; return s && s.rows.length > 0 &&
        Date.parse(s.rows[0].wallTime) < ${weekStartMs + DAY * 1000}; })()`,
      30_000,
    );
    const d: Drawn = await page.evaluate(`(() => {
      const tl = window.floorline.timeline;
      return {
        rows: tl.series.rows.map((r) => ({ wall: Date.parse(r.wallTime), mean: r.mean, gap: r.gap })),
        width: document.getElementById('timeline').clientWidth,
        incidents: tl.incidents.map((i) => i.id),
        info: document.getElementById('timeline-info').textContent,
        drawMs: tl.lastDrawMs,
      };
    })()`);
    process.stdout.write(
      `timeline week: ${d.rows.length} rows for ${d.width} px, drawn in ${d.drawMs.toFixed(1)} ms\n`,
    );
    // Downsampled by the store to at most the chart's width in CSS px (10 080 minute rows were seeded).
    expect(d.rows.length).toBeLessThanOrEqual(d.width);
    expect(d.rows.length).toBeGreaterThan(d.width / 4);
    // The six-hour break: a gap row inside it, and no data row there.
    const inBreak = (w: number) => w >= weekStartMs + BREAK.from * 1000 && w < weekStartMs + BREAK.to * 1000;
    expect(d.rows.some((r) => r.gap && inBreak(r.wall))).toBe(true);
    expect(d.rows.filter((r) => !r.gap && r.mean !== null && inBreak(r.wall))).toEqual([]);
    expect(d.info).toMatch(/gap rows shown as breaks/);
    // Every seeded incident is among those shaded.
    for (let i = 0; i < INCIDENTS; i++) {
      const s = (i + 0.5) * DAY + 1800;
      expect(d.incidents).toContain(`mains-bridge-s${s * RATE}`);
    }
    expect(d.info).toMatch(new RegExp(`${d.incidents.length} incidents shaded`));
    // Merged rows wholly inside one seeded day keep that day's level (a constant's RMS is itself).
    for (let day = 0; day < 7; day++) {
      const a = weekStartMs + day * DAY * 1000 + 3 * 3600 * 1000;
      const b = weekStartMs + (day + 1) * DAY * 1000 - 3 * 3600 * 1000;
      const means = d.rows.filter((r) => !r.gap && r.mean !== null && r.wall >= a && r.wall < b).map((r) => r.mean!);
      expect(means.length).toBeGreaterThan(0);
      for (const m of means) expect(Math.abs(m / dayLevel(day) - 1)).toBeLessThan(1e-9);
    }
    await page.close();
  }, 120_000);
});
