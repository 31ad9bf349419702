// The incidents panel in real headless Chromium against the bundled demo (`floorline demo`, its own history
// store): one row per scripted fault, settled levels equal to /api/incidents, and one Acknowledge per incident.
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { mkdtempSync, readFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import type { BrowserContext, Page } from 'playwright-core';
import { launchChromium, ARTIFACTS } from './support/browser.ts';
import { startAgent, type Agent } from './support/agent.ts';
import type { AgentStatus } from '../../protocol/messages.ts';
import type { IncidentsReply } from '../../protocol/incidents.ts';

const dir = mkdtempSync(join(tmpdir(), 'floorline-incidents-'));
let browser: BrowserContext;
let agent: Agent;
let page: Page;

interface Signal {
  kind: string;
  start?: number;
}
interface Scenario {
  duration: number;
  channels: { name: string; signals: Signal[] }[];
}
const scenario = JSON.parse(
  readFileSync(new URL('../../recordings/demo-scenario.json', import.meta.url), 'utf8'),
) as Scenario;

/** Scripted faults of one loop: every non-noise signal, the tones of one channel being one spur fault. */
function scriptedFaults(): { channel: string; kind: string; start: number }[] {
  const out: { channel: string; kind: string; start: number }[] = [];
  for (const ch of scenario.channels) {
    for (const s of ch.signals) {
      if (s.kind === 'white' || s.kind === 'flicker') continue;
      if (s.kind === 'tone' && out.some((f) => f.channel === ch.name && f.kind === 'tone')) continue;
      out.push({ channel: ch.name, kind: s.kind, start: s.start ?? 0 });
    }
  }
  return out;
}

beforeAll(async () => {
  browser = await launchChromium({ width: 1600, height: 1200 });
  agent = await startAgent(['demo', '--speed', '6', '--http-port', '0', '--data', join(dir, 'data')]);
  page = await browser.newPage();
  await page.goto(agent.url);
});
afterAll(async () => {
  await agent?.stop();
  await browser?.close();
});

describe('incidents panel', () => {
  it('shows one incident per scripted fault of the first loop, with the settled levels of /api/incidents', async () => {
    // Past the end of the first loop (plus settling), in sample time.
    await expect
      .poll(async () => ((await (await fetch(`${agent.url}api/status`)).json()) as AgentStatus).t, {
        timeout: 40_000,
        interval: 250,
      })
      .toBeGreaterThan(scenario.duration + 3);
    const api = ((await (await fetch(`${agent.url}api/incidents`)).json()) as IncidentsReply).incidents;
    const firstLoop = api.filter((i) => i.start.t < scenario.duration);
    const faults = scriptedFaults();
    expect(firstLoop.length, JSON.stringify(firstLoop.map((i) => [i.channel, i.rules, i.start.t]))).toBe(faults.length);
    for (const f of faults) {
      // Each fault's incident starts after its scripted onset, on its channel (detection takes a few seconds).
      const rule = { mains: 'mains', tone: 'spur', 'band-step': 'band-rise', overload: 'clip' }[f.kind] ?? f.kind;
      const match = firstLoop.filter(
        (i) => i.channel === f.channel && i.rules.includes(rule) && i.start.t >= f.start && i.start.t < f.start + 15,
      );
      expect(match.length, `${f.kind} on ${f.channel} at ${f.start} s`).toBe(1);
    }
    await page.waitForTimeout(2500); // the page polls every 2 s: every incident ended before that poll is shown
    const rows: { id: string; settled: string }[] = await page.evaluate(
      `Array.from(document.querySelectorAll('#incidents tbody tr[data-incident]')).map((r) => ({ id: r.dataset.incident, settled: r.cells[4].dataset.value }))`,
    );
    for (const i of api.filter((x) => x.end !== null)) {
      const row = rows.find((r) => r.id === i.id);
      expect(row, i.id).toBeDefined();
      expect(row!.settled).toBe(i.settled ? String(i.settled.levelDb) : '');
    }
    await page.locator('.incidents-panel').screenshot({ path: join(ARTIFACTS, 'dashboard-incidents.png') });
  });

  it('acknowledges an open incident with one click, for all of its alarms', async () => {
    // At 6× an incident lasts seconds: the button is clicked as soon as it is there (a real click event on it).
    await page.waitForSelector('#incidents button.ack', { timeout: 30_000 });
    const id = await page.evaluate(
      `(() => { const b = document.querySelector('#incidents button.ack'); b.click(); return b.closest('tr').dataset.incident; })()`,
    );
    await expect
      .poll(() => page.textContent('#incident-message'), { timeout: 10_000 })
      .toMatch(/acknowledged: the incident and its alarms/);
    await expect
      .poll(
        async () =>
          ((await (await fetch(`${agent.url}api/incidents`)).json()) as IncidentsReply).incidents.find(
            (i) => i.id === id,
          )?.acknowledged,
        { timeout: 10_000 },
      )
      .toBe(true);
  });

  it('adds a note from the page that the store returns as text, markup and all', async () => {
    const text = `<script>alert("x")</script> moved the cable at the chamber door`;
    await page.fill('#note-text', text);
    await page.click('#note-add');
    await expect
      .poll(() => page.textContent('#incident-message'), { timeout: 10_000 })
      .toMatch(/note stored at t = [\d.]+ s/);
    expect(await page.evaluate('document.querySelectorAll("script:not([src])").length')).toBe(0);
  });
});
