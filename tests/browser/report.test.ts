// The report in real headless Chromium: it opens with no console errors and makes no network request at all (the
// HTML is self-contained), and its SVG plots render with a size.
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { BrowserContext } from 'playwright-core';
import { tempDir } from '../wav/support.ts';
import { cliIn, replayDemoIntoStore } from '../store/support.ts';
import { launchChromium } from './support/browser.ts';

let dir: string;
let browser: BrowserContext;

beforeAll(async () => {
  dir = tempDir('report-browser');
  const store = replayDemoIntoStore(dir);
  const floorline = cliIn(() => dir);
  expect(
    floorline(
      'note',
      '--store',
      store,
      '--incident',
      'mains-bridge-s167999',
      '<script>console.error("injected")</script>',
    ).status,
  ).toBe(0);
  const r = floorline('report', '--store', store, '-o', 'report.html');
  expect(r.status, r.stderr).toBe(0);
  browser = await launchChromium({ width: 900, height: 1200 });
}, 120_000);

afterAll(async () => {
  await browser?.close();
});

describe('the report in Chromium', () => {
  it('loads with no console errors and no requests beyond its own file', async () => {
    const page = await browser.newPage();
    const errors: string[] = [];
    const requests: string[] = [];
    page.on('console', (m) => {
      if (m.type() === 'error') errors.push(m.text());
    });
    page.on('pageerror', (e) => errors.push(e.message));
    page.on('request', (req) => requests.push(req.url()));
    const url = `file://${join(dir, 'report.html')}`;
    await page.goto(url, { waitUntil: 'load' });
    expect(errors).toEqual([]);
    expect(requests).toEqual([url]);
    const plots = await page.$$eval('svg', (svgs) => svgs.map((s) => s.getBoundingClientRect().width));
    // One spectrum per incident (four scripted faults), band RMS and floor density for each of the two channels.
    expect(plots.length).toBe(8);
    for (const w of plots) expect(w).toBeGreaterThan(500);
    // The hostile note is shown as text.
    expect(await page.textContent('table.incidents')).toContain('<script>console.error("injected")</script>');
    await page.close();
  });
});
