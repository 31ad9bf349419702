// The timeline's Report link in real headless Chromium against the bundled demo (`floorline demo`, with a token):
// the operator acknowledges one incident and shelves another on the page, then follows Report; the new tab holds
// the report of the timeline's span (the from and to of its last answered /api/trend query, and the report's header
// states it in sample time) from GET /api/report, with the settled levels /api/incidents gives and the
// acknowledge and shelve history, loads nothing else and logs no error. The endpoint refuses a request without
// the token (401) and one from another site's page (403), like /api/trend.
import { request as httpRequest } from 'node:http';
import { mkdtempSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { BrowserContext, Page } from 'playwright-core';
import { launchChromium } from './support/browser.ts';
import { startAgent, type Agent } from './support/agent.ts';
import type { IncidentsReply } from '../../protocol/incidents.ts';

const TOKEN = 'a1b2c3d4e5f60718293a4b5c6d7e8f90';
const dir = mkdtempSync(join(tmpdir(), 'floorline-report-button-'));
let browser: BrowserContext;
let agent: Agent;
let page: Page;
let base: string;

/** A GET with the given headers, answered status. */
function get(url: string, headers: Record<string, string>): Promise<number> {
  return new Promise((resolve, reject) => {
    const req = httpRequest(url, { headers }, (res) => {
      res.resume();
      resolve(res.statusCode ?? 0);
    });
    req.on('error', reject);
    req.end();
  });
}

const incidents = async () =>
  (
    (await (
      await fetch(`${base}api/incidents`, { headers: { cookie: `floorline_token=${TOKEN}` } })
    ).json()) as IncidentsReply
  ).incidents;

beforeAll(async () => {
  browser = await launchChromium({ width: 1600, height: 1200 });
  agent = await startAgent([
    'demo',
    '--speed',
    '6',
    '--http-port',
    '0',
    '--data',
    join(dir, 'data'),
    '--token',
    TOKEN,
    '--show-token',
  ]);
  base = agent.url.replace(/\?.*$/, '');
  page = await browser.newPage();
  await page.goto(agent.url); // ?token=… sets the cookie the report tab sends too
});
afterAll(async () => {
  await agent?.stop();
  await browser?.close();
});

describe('Report link on the timeline', () => {
  it('opens the report of the timeline span with the incidents, their settled levels and operator history', async () => {
    // At 6× the mains and spur incidents stay open: acknowledge the first, shelve the second (real clicks).
    await page.waitForSelector('#incidents tr[data-incident] button.ack', { timeout: 40_000 });
    await expect
      .poll(async () => page.locator('#incidents tr[data-incident] button.shelve').count(), { timeout: 30_000 })
      .toBeGreaterThan(1);
    const acked = await page.evaluate(
      `(() => { const b = document.querySelector('#incidents tr[data-incident] button.ack'); b.click(); return b.closest('tr').dataset.incident; })()`,
    );
    await expect.poll(() => page.textContent('#incident-message'), { timeout: 10_000 }).toMatch(/acknowledged/);
    const shelved = await page.evaluate(
      `(() => { const b = [...document.querySelectorAll('#incidents tr[data-incident] button.shelve')].find((x) => x.closest('tr').dataset.incident !== ${JSON.stringify(acked)}); b.click(); return b.closest('tr').dataset.incident; })()`,
    );
    await expect.poll(() => page.textContent('#incident-message'), { timeout: 10_000 }).toMatch(/shelved/);
    // Let the store commit (twice a second) and some incidents end.
    await expect
      .poll(async () => (await incidents()).filter((i) => i.end).length, { timeout: 40_000 })
      .toBeGreaterThan(1);

    // The spans the timeline drew: its /api/trend queries that were answered (it asks again every 10 s).
    const drawn: URL[] = [];
    page.on('requestfinished', (r) => {
      if (r.url().includes('/api/trend?')) drawn.push(new URL(r.url()));
    });
    await page.selectOption('#timeline-span', 'day');
    await expect.poll(() => drawn.length, { timeout: 30_000 }).toBeGreaterThan(0);
    const [tab] = await Promise.all([browser.waitForEvent('page'), page.click('#timeline-report')]);
    const errors: string[] = [];
    const requests: string[] = [];
    tab.on('console', (m) => m.type() === 'error' && errors.push(m.text()));
    tab.on('pageerror', (e) => errors.push(e.message));
    tab.on('request', (r) => requests.push(r.url()));
    await tab.waitForLoadState('load');
    await tab.waitForSelector('table.incidents', { timeout: 60_000 });
    // The report asks for the timeline's span, both ends: a replay's span runs to its newest sample (sample time),
    // from a day before it, here the start of the store.
    const asked = new URL(tab.url());
    expect(asked.pathname).toBe('/api/report');
    // The last span drawn when the link was followed (or the one before, had a refresh just been answered).
    const spans = drawn.slice(-2).map((u) => `${u.searchParams.get('from')} ${u.searchParams.get('to')}`);
    expect(spans).toContain(`${asked.searchParams.get('from')} ${asked.searchParams.get('to')}`);
    expect(asked.searchParams.get('from')).toBe('t=0');
    const to = Number(/^t=([\d.]+)$/.exec(asked.searchParams.get('to') ?? '')?.[1]);
    expect(to).toBeGreaterThan(0);
    // The report states that span in sample time (to the millisecond it prints).
    const spanRow = (await tab.textContent('table.kv tr:nth-child(2) td'))!;
    expect(spanRow).toContain(`t = 0.000 – ${to.toFixed(3)} s (sample time)`);
    expect(errors).toEqual([]);
    expect(requests.every((u) => u === tab.url())).toBe(true);
    const table = (await tab.textContent('table.incidents'))!;
    const api = await incidents();
    // Every incident the store had when the report was built is in it, with the settled level of /api/incidents.
    const listed = await tab.$$eval('table.incidents tr td:first-child a', (as) => as.map((a) => a.textContent));
    expect(listed.length).toBeGreaterThan(1);
    for (const id of listed) {
      const i = api.find((x) => x.id === id);
      expect(i, `${id} in /api/incidents`).toBeDefined();
      if (i!.settled) expect(table).toContain(`${i!.settled.levelDb.toFixed(1)} dB re baseline`);
    }
    const row = (id: string) => tab.locator(`table.incidents tr:has(a[href="#inc-${id}"])`).textContent();
    expect(await row(acked as string)).toMatch(/acknowledged at 20\d\d-/);
    expect(await row(shelved as string)).toMatch(/shelved until t=[\d.]+ s at 20\d\d-/);
    // Captures link to the agent's read-only /files/ route.
    const href = await tab.getAttribute('table.incidents a[title^="recordings/"]', 'href');
    expect(href).toMatch(/^\/files\/recordings\/capture-.+\.wav$/);
    await tab.close();
  }, 180_000);

  it('refuses a request without the token and one from another site', async () => {
    const url = `${base}api/report?from=t%3D0`;
    expect(await get(url, {})).toBe(401);
    expect(await get(url, { cookie: `floorline_token=${TOKEN}`, origin: 'http://evil.example' })).toBe(403);
  });
});
