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
import { waitUntil } from './support/page.ts';

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

async function open(): Promise<Page> {
  const page = await browser.newPage();
  const errors: string[] = [];
  page.on('pageerror', (e) => errors.push(e.stack ?? e.message));
  await page.goto(agent.url);
  await waitUntil(page, 'window.floorline !== undefined && window.floorline.spectraApplied >= 1', 20_000);
  expect(errors).toEqual([]);
  return page;
}

beforeAll(async () => {
  browser = await launchChromium({ width: 1600, height: 1200 });
  agent = await startAgent(['demo', '--speed', '4', '--http-port', '0', '--data', join(dir, 'data')]);
  // Two minutes of sample time (the waterfall's span) kept in the store before the page opens: the demo opens
  // at t = 17 s, so 125 s of it end at t = 142 s.
  const end = Date.now() + 90_000;
  while ((await status()).t < 142) {
    if (Date.now() > end) throw new Error('the demo did not reach 142 s of sample time within 90 s');
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
  }, 120_000);

  it('takes its colour range from the baseline floor, lets the user set it, and goes back on request', async () => {
    // The rule: the baseline's median density above DC, in dB re 1 V²/Hz, −10 to +40 dB, in whole dB; numpy on the
    // baseline file the demo compares against.
    const py = `import json, numpy as np, sys
b = json.load(open(sys.argv[1]))['channels'][0]['psd'][1:]
v = np.sort(np.array([x for x in b if x > 0])); f = 10 * np.log10(v[len(v) // 2])
print(int(round(f - 10)), int(round(f + 40)))`;
    const [lo, hi] = execFileSync('python3', ['-c', py, join(root, 'recordings/demo-baseline.json')], {
      encoding: 'utf8',
    })
      .trim()
      .split(' ')
      .map(Number);
    const page = await open();
    const range = () => page.evaluate('[...window.floorline.waterfall.range, window.floorline.waterfall.rangeFrom]');
    await expect.poll(range, { timeout: 10_000 }).toEqual([lo, hi, 'baseline']);
    expect(await page.inputValue('#waterfall-low')).toBe(String(lo));
    expect(await page.inputValue('#waterfall-high')).toBe(String(hi));
    await page.fill('#waterfall-low', String(lo - 20));
    await page.fill('#waterfall-high', String(hi - 5));
    await page.press('#waterfall-high', 'Enter');
    await expect.poll(range, { timeout: 5_000 }).toEqual([lo - 20, hi - 5, 'user']);
    // The line under the waterfall states the range with the next row drawn.
    await expect
      .poll(() => page.textContent('#waterfall-axis'), { timeout: 10_000 })
      .toMatch(new RegExp(`colours ${lo - 20}…${hi - 5} .*\\(user\\)`));
    await page.click('#waterfall-range-reset');
    await expect.poll(range, { timeout: 5_000 }).toEqual([lo, hi, 'baseline']);
    await page.close();
  }, 60_000);

  it("puts the demo's 50 Hz mains stripe under the spectrum chart's 50 Hz, within one pixel", async () => {
    // The demo's bridge carries 50 Hz mains pickup from 20 s of each loop (recordings/demo-scenario.json), so the
    // kept rows hold a bright 50 Hz column. Screen positions come from the DOM and uPlot's own valToPos/posToVal.
    const page = await open();
    await waitUntil(page, 'window.floorline.waterfall.prefilledRows > 0', 10_000);
    const r: { chartX: number; waterfallX: number; stripeHz: number; pxPerBin: number } = await page.evaluate(`(() => {
      const plot = window.floorline.spectrum.plot;
      const w = window.floorline.waterfall;
      const over = plot.over.getBoundingClientRect();
      const c = document.getElementById('waterfall');
      const cr = c.getBoundingClientRect();
      const scale = cr.width / c.width; // CSS px per canvas column
      const chartX = over.left + plot.valToPos(50, 'x');
      const waterfallX = cr.left + w.columnOf(50) * scale;
      // The brightest canvas column between 40 and 62 Hz of the chart's axis (summed over every row): the stripe.
      const colAt = (f) => Math.floor((over.left + plot.valToPos(f, 'x') - cr.left) / scale);
      const d = c.getContext('2d').getImageData(0, 0, c.width, c.height).data;
      let best = -1, bestSum = -1;
      for (let x = colAt(40); x <= colAt(62); x++) {
        let s = 0;
        for (let y = 0; y < c.height; y++) { const i = (y * c.width + x) * 4; s += d[i] + d[i + 1] + d[i + 2]; }
        if (s > bestSum) { bestSum = s; best = x; }
      }
      const stripeHz = plot.posToVal(cr.left + (best + 0.5) * scale - over.left, 'x');
      const binHz = window.floorline.context.binHz;
      const pxPerBin = plot.valToPos(50 + binHz, 'x') - plot.valToPos(50, 'x');
      return { chartX, waterfallX, stripeHz, pxPerBin };
    })()`);
    expect(Math.abs(r.waterfallX - r.chartX)).toBeLessThanOrEqual(1);
    // The stripe is the mains line: 50 Hz within one FFT bin (8000 / 4096 = 1.95 Hz), the bin the line falls in.
    expect(Math.abs(r.stripeHz - 50)).toBeLessThanOrEqual(1.96);
    expect(r.pxPerBin).toBeGreaterThan(1); // a bin is wider than a pixel here, so one pixel is the finer test
    await page.close();
  }, 60_000);
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
  }, 120_000);

  it('a click on an incident shows the spectrum at its peak, its capture and the command that replays it', async () => {
    const page = await open();
    await waitUntil(
      page,
      'window.floorline.timeline.series && window.floorline.incidents.incidents.some((i) => i.channel === "bridge" && i.end)',
      30_000,
    );
    await page.evaluate('window.floorline.refreshTimeline()');
    // The chart's x range follows new rows: read the incident's position just before each click, and retry.
    let target: { id: string; x: number; capture: string | null } | undefined;
    for (let attempt = 0; attempt < 8; attempt++) {
      target = await page.evaluate(`(() => {
        const tl = window.floorline.timeline;
        // The widest ended bridge incident (a clip lasts a fraction of a pixel column at this zoom); incidents can
        // overlap: the one the chart picks at its middle (the newest there).
        const mid = (i) => (Date.parse(i.start.wallTime) + Date.parse(i.end.wallTime)) / 2000;
        const span = (i) => Date.parse(i.end.wallTime) - Date.parse(i.start.wallTime);
        const i = window.floorline.incidents.incidents
          .filter((i) => i.channel === 'bridge' && i.end)
          .sort((a, b) => span(b) - span(a))[0];
        const there = tl.incidentAt(mid(i));
        return { id: there.id, x: tl.plot.valToPos(mid(i), 'x'), capture: there.capture };
      })()`);
      await page.locator('#timeline').scrollIntoViewIfNeeded();
      const box = (await page.locator('#timeline .u-over').boundingBox())!;
      await page.mouse.click(box.x + target!.x, box.y + box.height / 2);
      const ok = await page
        // The x range can move between reading the position and the click (new rows, a new incident there):
        // only a moment showing the incident read is taken, else read again and click again.
        .waitForFunction(
          `window.floorline.moment.shown !== null && window.floorline.moment.shown.incident === ${JSON.stringify(target!.id)}`,
          null,
          { timeout: 5_000 },
        )
        .then(
          () => true,
          () => false,
        );
      if (ok) break;
    }
    expect(((await page.evaluate(SHOWN)) as Shown).incident).toBe(target!.id);
    const replay = (await page.textContent('#moment-replay'))!;
    expect(replay).toContain(target!.id);
    if (target!.capture) expect(replay).toContain(`floorline replay ${target!.capture}`);
    else expect(replay).toMatch(/no capture was kept/);
    await page.close();
  }, 120_000);
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
    await waitUntil(page, `!/capturing/.test(document.getElementById('control-message').textContent)`, 60_000);
    // The demo clips at 52 s of each loop, and a span holding an overload is refused (capture again: the next clip
    // is a minute of sample time away); on a loaded machine the page can also lose its link mid-capture.
    if (/connection to the agent lost|clipped sample/.test((await page.textContent('#control-message')) ?? '')) {
      await waitUntil(page, 'document.body.dataset.link === "up"', 20_000);
      await page.click('#capture-baseline');
      if (/Press again/.test((await page.textContent('#control-message')) ?? '')) await page.click('#capture-baseline');
    }
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
    await expect
      .poll(() => page.textContent('#control-message'), { timeout: 30_000 })
      .toMatch(/comparing against .* again/);
    const restored = await statusWhen((s) => s.baseline?.file === first.baseline?.file);
    expect(restored.baseline).toEqual(first.baseline);
    expect(restored.previousBaseline?.file).toBe(captured.baseline!.file);
    // The demo's floor against its own baseline: the band rows are judged again, near 0 dB in its quiet bands
    // (a floor compared with a baseline of the same floor reads about 0 dB, common practice).
    await expect
      .poll(async () => (await status()).bands.filter((b) => b.thresholdDb !== null).length, { timeout: 15_000 })
      .toBeGreaterThanOrEqual(4);
    await page.close();
  }, 120_000);
});

/** Roles of the things a person operates (WAI-ARIA 1.2 widget roles as Chromium names them). */
const CONTROL_ROLES = new Set([
  'button',
  'checkbox',
  'combobox',
  'listbox',
  'menuitem',
  'radio',
  'searchbox',
  'slider',
  'spinbutton',
  'switch',
  'textbox',
  'link',
  'DisclosureTriangle',
]);

describe('accessibility and keyboard', () => {
  it("leaves no control without a name in Chromium's accessibility tree", async () => {
    const page = await open();
    await page.setViewportSize({ width: 1280, height: 800 });
    // Open everything that has controls of its own: the noise budget, an incident's folded part, the moment panel.
    await page.click('.budget summary');
    await waitUntil(page, 'document.querySelectorAll("#incidents button").length > 0', 30_000);
    await page.evaluate('window.floorline.showMoment(Date.parse(window.floorline.status.wallTime) / 1000 - 30, null)');
    await waitUntil(page, '!document.getElementById("moment").hidden', 10_000);
    const cdp = await page.context().newCDPSession(page);
    type AxNode = { ignored: boolean; role?: { value: string }; name?: { value: string }; backendDOMNodeId?: number };
    const unnamedIn = (nodes: AxNode[]): AxNode[] =>
      nodes.filter((n) => !n.ignored && CONTROL_ROLES.has(n.role?.value ?? '') && !(n.name?.value ?? '').trim());
    // The check finds an unlabelled field when there is one (added for a moment, then removed).
    await page.evaluate('document.body.appendChild(Object.assign(document.createElement("input"), { id: "probe" }))');
    const probe = (await cdp.send('Accessibility.getFullAXTree')) as { nodes: AxNode[] };
    expect(unnamedIn(probe.nodes).length).toBe(1);
    await page.evaluate('document.getElementById("probe").remove()');
    const { nodes } = (await cdp.send('Accessibility.getFullAXTree')) as { nodes: AxNode[] };
    const controls = nodes.filter((n) => !n.ignored && CONTROL_ROLES.has(n.role?.value ?? ''));
    // The page has dozens of controls (display, analysis, baseline, export, budget, timeline, incidents, notes).
    expect(controls.length).toBeGreaterThan(40);
    const unnamed: string[] = [];
    for (const n of unnamedIn(nodes)) {
      const { object } = (await cdp.send('DOM.resolveNode', { backendNodeId: n.backendDOMNodeId })) as {
        object: { objectId: string };
      };
      const html = (await cdp.send('Runtime.callFunctionOn', {
        objectId: object.objectId,
        functionDeclaration: 'function () { return this.outerHTML.slice(0, 120); }',
        returnByValue: true,
      })) as { result: { value: string } };
      unnamed.push(`${n.role?.value}: ${html.result.value}`);
    }
    expect(unnamed).toEqual([]);
    await cdp.detach();
    await page.close();
  }, 120_000);

  it('shelves an incident and adds a note from the keyboard alone', async () => {
    const page = await open();
    await waitUntil(page, 'document.querySelector("#incidents button.shelve") !== null', 30_000);
    // Tab from the top of the page until the first Shelve button has the focus, then press Enter.
    // At 4× an incident can end while the Tabs walk the page (its Shelve button goes): then wait for an open one
    // and walk again from the top.
    let onShelve = false;
    const end = Date.now() + 90_000;
    while (!onShelve && Date.now() < end) {
      await waitUntil(page, 'document.querySelector("#incidents button.shelve") !== null', 60_000);
      await page.evaluate('document.activeElement && document.activeElement.blur()');
      for (let i = 0; i < 200 && !onShelve; i++) {
        await page.keyboard.press('Tab');
        onShelve = await page.evaluate('document.activeElement.classList.contains("shelve")');
        if (!onShelve && (await page.evaluate('document.querySelector("#incidents button.shelve") === null'))) break;
      }
    }
    expect(onShelve).toBe(true);
    await page.keyboard.press('Enter');
    await expect.poll(() => page.textContent('#incident-message'), { timeout: 45_000 }).toMatch(/^shelved for 10 min/);
    // `n` puts the focus in the note field; Enter stores the note (the store and event log hold it).
    await page.evaluate('document.activeElement && document.activeElement.blur()');
    await page.keyboard.press('n');
    expect(await page.evaluate('document.activeElement.id')).toBe('note-text');
    await page.keyboard.type('keyboard note: lid closed');
    await page.keyboard.press('Enter');
    await expect.poll(() => page.textContent('#incident-message'), { timeout: 45_000 }).toMatch(/^note stored at t = /);
    // In the demo's store, read by python's sqlite3 (the store commits its writes every half second).
    const notes = (): string =>
      execFileSync(
        'python3',
        [
          '-c',
          'import sqlite3, sys; print([r[0] for r in sqlite3.connect(sys.argv[1]).execute("select text from notes")])',
          join(dir, 'data', 'replays', 'demo.sqlite'),
        ],
        { encoding: 'utf8' },
      );
    try {
      await expect.poll(notes, { timeout: 45_000 }).toContain('keyboard note: lid closed');
    } catch (err) {
      // What the agent said is what tells a store that stopped writing from a slow commit.
      const said = agent
        .output()
        .split('\n')
        .filter((l) => /history|store|part |note/.test(l));
      throw new Error(`${(err as Error).message}\nagent lines on history, store, parts and notes:\n${said.join('\n')}`);
    }
    await page.close();
  }, 300_000);
});
