// The dashboard for a long watch, in real headless Chromium against the bundled demo (`floorline demo`, its own
// history store): the waterfall filled from the store on page load, the spectrum at a clicked time of the
// timeline, and every control with a name in Chromium's accessibility tree.
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { execFileSync } from 'node:child_process';
import { mkdtempSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import type { BrowserContext, Page } from 'playwright-core';
import { launchChromium, ARTIFACTS } from './support/browser.ts';
import { startAgent, type Agent } from './support/agent.ts';
import type { AgentStatus } from '../../protocol/messages.ts';
import type { SpectraReply } from '../../protocol/spectra.ts';

const root = new URL('../../', import.meta.url).pathname;

const dir = mkdtempSync(join(tmpdir(), 'floorline-long-watch-'));
let browser: BrowserContext;
let agent: Agent;

const status = async (): Promise<AgentStatus> => (await (await fetch(`${agent.url}api/status`)).json()) as AgentStatus;

/** The first /api/status for which `ok` holds (the agent shares one status per half-second tick). */
async function statusWhen(ok: (s: AgentStatus) => boolean, timeoutMs = 10_000): Promise<AgentStatus> {
  const end = Date.now() + timeoutMs;
  for (;;) {
    const s = await status();
    if (ok(s)) return s;
    if (Date.now() > end) throw new Error(`status never matched; last: ${JSON.stringify(s.baseline)}`);
    await new Promise((r) => setTimeout(r, 100));
  }
}

/** Polls a page-side expression until it is truthy. */
async function waitUntil(page: Page, expression: string, timeoutMs: number): Promise<void> {
  const end = Date.now() + timeoutMs;
  while (!(await page.evaluate(expression))) {
    if (Date.now() > end) throw new Error(`timed out waiting for ${expression}`);
    await new Promise((r) => setTimeout(r, 50));
  }
}

async function open(): Promise<Page> {
  const page = await browser.newPage();
  const errors: string[] = [];
  page.on('pageerror', (e) => errors.push(e.message));
  await page.goto(agent.url);
  await waitUntil(page, 'window.floorline !== undefined && window.floorline.spectraApplied >= 1', 20_000);
  expect(errors).toEqual([]);
  return page;
}

beforeAll(async () => {
  browser = await launchChromium({ width: 1600, height: 1200 });
  agent = await startAgent(['demo', '--speed', '4', '--http-port', '0', '--data', join(dir, 'data')]);
  // Two minutes of sample time (the waterfall's span) kept in the store before the page opens.
  const end = Date.now() + 90_000;
  while ((await status()).t < 125) {
    if (Date.now() > end) throw new Error('the demo did not reach 125 s of sample time within 90 s');
    await new Promise((r) => setTimeout(r, 250));
  }
}, 120_000);
afterAll(async () => {
  await agent?.stop();
  await browser?.close();
});

describe('waterfall after a page load', () => {
  it('is filled from the kept spectra at once, not row by row from the live stream', async () => {
    const kept = (await (await fetch(`${agent.url}api/spectra?channel=bridge&from=t=0`)).json()) as SpectraReply;
    expect(kept.rows.length).toBeGreaterThan(20);
    const page = await open();
    await waitUntil(page, 'window.floorline.waterfall.prefilledRows > 0', 10_000);
    const r: { prefilled: number; live: number; height: number; darkRows: number } = await page.evaluate(`(() => {
      const w = window.floorline.waterfall;
      const c = document.getElementById('waterfall');
      const d = c.getContext('2d').getImageData(0, 0, c.width, c.height).data;
      // Rows still in the cleared colour rgb(16, 24, 43) across the whole width: never drawn.
      let darkRows = 0;
      for (let y = 0; y < c.height; y++) {
        let dark = true;
        for (let x = 0; x < c.width && dark; x++) { const i = (y * c.width + x) * 4; dark = d[i] === 16 && d[i + 1] === 24 && d[i + 2] === 43; }
        if (dark) darkRows++;
      }
      return { prefilled: w.prefilledRows, live: window.floorline.spectraApplied, height: c.height, darkRows };
    })()`);
    await page.screenshot({ path: join(ARTIFACTS, 'waterfall-prefilled.png') });
    // 125 s of kept history at 0.5 s a row fills the 240-row canvas; the live stream alone would have drawn one
    // row per 5 spectra received so far.
    expect(r.prefilled).toBeGreaterThanOrEqual(r.height * 0.75);
    expect(r.live / 5).toBeLessThan(r.prefilled / 4);
    expect(r.darkRows).toBeLessThan(r.height * 0.1);
    await page.close();
  });
});

interface Shown {
  sample: number;
  wallTime: string;
  fLow: number;
  fHigh: number;
  density: number[];
  base: number[] | null;
  incident: string | null;
}
const SHOWN = `(() => { const m = window.floorline.moment.shown; if (!m) return null; const s = m.spectrum;
  return { sample: s.sample, wallTime: s.wallTime, fLow: s.fLow, fHigh: s.fHigh, density: s.density,
    base: m.baseline && Array.from(m.baseline), incident: m.incident }; })()`;

describe('timeline: the spectrum at a picked time', () => {
  it('a click shows the kept spectrum nearest that time (as /api/spectrum gives it) against the baseline on the same grid', async () => {
    const page = await open();
    await waitUntil(
      page,
      'window.floorline.timeline.series && window.floorline.timeline.series.rows.length > 5',
      20_000,
    );
    await page.locator('#timeline').scrollIntoViewIfNeeded();
    const box = (await page.locator('#timeline .u-over').boundingBox())!;
    await page.mouse.click(box.x + box.width * 0.5, box.y + box.height / 2);
    await waitUntil(page, 'window.floorline.moment.shown !== null', 10_000);
    expect(await page.isVisible('#moment-chart canvas')).toBe(true);
    const shown = (await page.evaluate(SHOWN)) as Shown;
    const api = (await (
      await fetch(`${agent.url}api/spectrum?channel=bridge&at=${encodeURIComponent(shown.wallTime)}`)
    ).json()) as { sample: number; density: number[] };
    expect(api.sample).toBe(shown.sample);
    expect(api.density).toEqual(shown.density);
    // The baseline on the same grid: the demo's baseline file reduced by numpy with the cell rule of
    // dsp/log-grid.ts (largest bin density of each log cell); the page has it as float32 from the frame.
    const ref = JSON.parse(
      execFileSync(
        'python3',
        [
          '-c',
          `import json, sys, numpy as np
b = json.load(open(sys.argv[1])); psd = np.array(next(c for c in b['channels'] if c['name'] == 'bridge')['psd'])
fLow, fHigh, n = float(sys.argv[2]), float(sys.argv[3]), int(sys.argv[4])
binHz = fHigh / (len(psd) - 1); f = fLow * (fHigh / fLow) ** (np.arange(n) / (n - 1)); half = np.sqrt((fHigh / fLow) ** (1 / (n - 1)))
k = np.arange(len(psd)); out = []
for fj in f:
    inside = k[(k * binHz >= fj / half * (1 - 1e-12)) & (k * binHz < fj * half * (1 - 1e-12)) & (k > 0)]
    out.append(float(psd[inside].max()) if len(inside) else float(psd[max(1, min(len(psd) - 1, int(np.floor(fj / binHz + 0.5))))]))
print(json.dumps(out))`,
          join(root, 'recordings/demo-baseline.json'),
          String(shown.fLow),
          String(shown.fHigh),
          String(shown.density.length),
        ],
        { encoding: 'utf8' },
      ),
    ) as number[];
    expect(shown.base).not.toBeNull();
    shown.base!.forEach((v, j) => expect(Math.abs(v / ref[j] - 1)).toBeLessThan(1e-6));
    expect(await page.textContent('#moment-info')).toMatch(/largest rise over the baseline: [+-]\d+\.\d dB at /);
    await page.screenshot({ path: join(ARTIFACTS, 'timeline-moment.png') });
    await page.close();
  });

  it('a click on an incident shows the spectrum at its peak, its capture and the command that replays it', async () => {
    const page = await open();
    await waitUntil(
      page,
      'window.floorline.timeline.series && window.floorline.incidents.incidents.some((i) => i.channel === "bridge" && i.end)',
      30_000,
    );
    await page.evaluate('window.floorline.refreshTimeline()');
    const target: { id: string; x: number; capture: string | null } = await page.evaluate(`(() => {
      const tl = window.floorline.timeline;
      const i = window.floorline.incidents.incidents.filter((i) => i.channel === 'bridge' && i.end).pop();
      const mid = (Date.parse(i.start.wallTime) + Date.parse(i.end.wallTime)) / 2000;
      return { id: i.id, x: tl.plot.valToPos(mid, 'x'), capture: i.capture };
    })()`);
    await page.locator('#timeline').scrollIntoViewIfNeeded();
    const box = (await page.locator('#timeline .u-over').boundingBox())!;
    await page.mouse.click(box.x + target.x, box.y + box.height / 2);
    await waitUntil(
      page,
      'window.floorline.moment.shown !== null && window.floorline.moment.shown.incident !== null',
      10_000,
    );
    expect(((await page.evaluate(SHOWN)) as Shown).incident).toBe(target.id);
    const replay = (await page.textContent('#moment-replay'))!;
    expect(replay).toContain(target.id);
    if (target.capture) expect(replay).toContain(`floorline replay ${target.capture}`);
    else expect(replay).toMatch(/no capture was kept/);
    await page.close();
  });
});

describe('the previous baseline', () => {
  it('can be restored from the Baseline controls after a warning, and the agent compares against it again', async () => {
    const page = await open();
    const first = await status();
    expect(first.baseline?.file).toMatch(/demo-baseline\.json$/);
    expect(await page.isHidden('#baseline-restore')).toBe(true); // nothing before the demo's own baseline
    // A new baseline from the page (twice when alarms are raised: the capture asks first).
    await page.fill('#baseline-seconds', '8');
    await page.click('#capture-baseline');
    if (/Press again/.test((await page.textContent('#control-message')) ?? '')) await page.click('#capture-baseline');
    await expect.poll(() => page.textContent('#control-message'), { timeout: 30_000 }).toMatch(/baseline saved/);
    const captured = await statusWhen((s) => s.baseline?.file !== first.baseline?.file);
    expect(captured.baseline?.file).toMatch(/^baselines\/baseline-\d+\.json$/);
    expect(captured.previousBaseline?.file).toBe(first.baseline!.file);
    await waitUntil(page, `!document.getElementById('baseline-restore').hidden`, 10_000);
    expect(await page.textContent('#baseline-now')).toContain(captured.baseline!.file);
    // The first click only warns; nothing is sent.
    await page.click('#baseline-restore');
    expect(await page.textContent('#control-message')).toMatch(
      /Compare against .*demo-baseline\.json again.*Press again/,
    );
    expect((await status()).baseline?.file).toBe(captured.baseline!.file);
    await page.click('#baseline-restore');
    await waitUntil(
      page,
      `/comparing against .* again/.test(document.getElementById('control-message').textContent)`,
      15_000,
    );
    const restored = await statusWhen((s) => s.baseline?.file === first.baseline?.file);
    expect(restored.baseline).toEqual(first.baseline);
    expect(restored.previousBaseline?.file).toBe(captured.baseline!.file);
    // The demo's floor against its own baseline: the band rows are judged again, near 0 dB in its quiet bands
    // (a floor compared with a baseline of the same floor reads about 0 dB, common practice).
    await expect
      .poll(async () => (await status()).bands.filter((b) => b.thresholdDb !== null).length, { timeout: 15_000 })
      .toBeGreaterThanOrEqual(4);
    await page.close();
  });
});
