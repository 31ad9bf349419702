// The dashboard in real headless Chromium against the real agent (`floorline replay` of a seeded recording of our
// invented bench). Values shown are checked against the agent's own /api/status and against files on disk.
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { execFileSync } from 'node:child_process';
import { existsSync, mkdtempSync, readFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import type { BrowserContext, Page } from 'playwright-core';
import { launchChromium, ARTIFACTS } from './support/browser.ts';
import { startAgent, freePort, type Agent } from './support/agent.ts';
import type { AgentStatus } from '../../protocol/messages.ts';
import { waitUntil } from './support/page.ts';

const dir = mkdtempSync(join(tmpdir(), 'floorline-browser-'));
let browser: BrowserContext;
const agents: Agent[] = [];

beforeAll(async () => {
  execFileSync('python3', [new URL('./support/make_rig_recording.py', import.meta.url).pathname, dir]);
  browser = await launchChromium();
});
afterAll(async () => {
  await Promise.all(agents.map((a) => a.stop()));
  await browser?.close();
});

async function agent(args: string[]): Promise<Agent> {
  const a = await startAgent(args);
  agents.push(a);
  return a;
}

// Page-side code is passed as strings: the root tsconfig has no DOM types, on purpose (agent code must not use them).
const applied = (p: Page): Promise<number> => p.evaluate('window.floorline.spectraApplied');

async function openDashboard(url: string): Promise<Page> {
  const page = await browser.newPage();
  const errors: string[] = [];
  page.on('pageerror', (e) => errors.push(e.message));
  await page.goto(url);
  await waitUntil(page, 'window.floorline !== undefined && window.floorline.spectraApplied >= 3', 20_000);
  expect(errors).toEqual([]);
  return page;
}

/** Pixels of the chart canvas that are neither background nor grid: drawn traces. */
async function tracePixels(page: Page, rgb: [number, number, number]): Promise<number> {
  return page.evaluate(`(() => {
    const c = ${JSON.stringify(rgb)};
    const canvas = document.querySelector('#spectrum canvas');
    const d = canvas.getContext('2d').getImageData(0, 0, canvas.width, canvas.height).data;
    let n = 0;
    for (let i = 0; i < d.length; i += 4) if (Math.abs(d[i] - c[0]) < 24 && Math.abs(d[i + 1] - c[1]) < 24 && Math.abs(d[i + 2] - c[2]) < 24 && d[i + 3] > 200) n++;
    return n;
  })()`);
}

describe('dashboard against a running replay', () => {
  let a: Agent;
  let page: Page;

  beforeAll(async () => {
    a = await agent([
      'replay',
      join(dir, 'fault.wav'),
      '--scale',
      '1',
      '--loop',
      '--http-port',
      '0',
      '--data',
      join(dir, 'data'),
    ]);
    page = await openDashboard(a.url);
  });

  it('loads the replay, shows the replay banner, and draws one trace per channel on the spectrum canvas', async () => {
    await page.screenshot({ path: join(ARTIFACTS, 'dashboard-replay.png') });
    expect(await page.textContent('#replay-banner')).toMatch(/Replaying .*fault\.wav/);
    expect(await page.isVisible('#replay-banner')).toBe(true);
    // Channel colours #0072b2 and #d55e00 (dashboard/colours.ts): thousands of trace pixels each, none before data.
    expect(await tracePixels(page, [0x00, 0x72, 0xb2])).toBeGreaterThan(300);
    expect(await tracePixels(page, [0xd5, 0x5e, 0x00])).toBeGreaterThan(300);
    expect(await page.textContent('#spectral-context')).toMatch(/hann window · ENBW 1\.500 bins/); // Hann NENBW = 1.5 bins (Harris 1978, Table 1)
    const health = await page.textContent('#health');
    expect(health).toMatch(/8\u2009000 S\/s/);
  });

  it('shows band figures identical to /api/status for the same spectrum', async () => {
    const seen = new Map<number, AgentStatus['bands']>();
    const deadline = Date.now() + 15_000;
    let match: { sample: number; dom: string[][] } | null = null;
    while (!match && Date.now() < deadline) {
      const st = (await (await fetch(`${a.url}api/status`)).json()) as AgentStatus;
      if (st.spectrumSample !== null) seen.set(st.spectrumSample, st.bands);
      const dom: { sample: number; rows: string[][] } = await page.evaluate(`(() => {
        const body = document.querySelector('#bands tbody');
        return { sample: Number(body.dataset.sample), rows: Array.from(body.rows).map((r) => [r.dataset.channel, r.dataset.band, r.cells[2].dataset.value]) };
      })()`);
      if (seen.has(dom.sample)) match = { sample: dom.sample, dom: dom.rows };
      else await new Promise((r) => setTimeout(r, 20));
    }
    expect(match, 'page and API never showed the same spectrum').not.toBeNull();
    const api = seen.get(match!.sample)!;
    expect(match!.dom.length).toBe(api.length);
    expect(api.length).toBeGreaterThanOrEqual(4);
    for (const b of api) {
      const row = match!.dom.find((r) => r[0] === b.channel && r[1] === `${b.low}-${b.high}`);
      expect(row, `${b.channel} ${b.low}-${b.high}`).toBeDefined();
      expect(Number(row![2])).toBe(b.rms);
    }
    // And the figures are the floors the recording was made with: white noise of σ over a band B has RMS
    // σ·sqrt(2B/fs) (one-sided density 2σ²/fs, common practice); ch0 σ = 1 µV, before the fault at 20 s.
    const whole = api.find((b) => b.channel === 'ch0' && b.high - b.low > 3000)!;
    expect(whole.rms / (1e-6 * Math.sqrt((2 * (whole.high - whole.low)) / 8000))).toBeGreaterThan(0.85);
    expect(whole.rms / (1e-6 * Math.sqrt((2 * (whole.high - whole.low)) / 8000))).toBeLessThan(1.15);
  });

  it('captures a baseline when the button is clicked and writes it into the data folder', async () => {
    await page.fill('#baseline-seconds', '3');
    await page.click('#capture-baseline');
    await waitUntil(
      page,
      `/baseline saved: baselines\\//.test(document.getElementById('control-message').textContent)`,
      20_000,
    );
    const msg = (await page.textContent('#control-message'))!;
    const file = /baselines\/\S+\.json/.exec(msg)![0];
    const path = join(dir, 'data', file);
    expect(existsSync(path)).toBe(true);
    const b = JSON.parse(readFileSync(path, 'utf8'));
    expect(b.schema).toBe('floorline.baseline/1');
    expect(b.channels.map((c: { name: string }) => c.name)).toEqual(['ch0', 'ch1']);
    expect(b.channels[0].psd.length).toBe(4096 / 2 + 1);
    expect(b.span.seconds).toBeCloseTo(3, 3);
    // The band table then carries baseline figures.
    await waitUntil(
      page,
      `Array.from(document.querySelectorAll('#bands tbody tr')).every((r) => r.cells[3].dataset.value !== '')`,
      10_000,
    );
    // And the alarm rules compare against it from then on: the status names it, and the event log says when.
    await expect
      .poll(
        async () =>
          ((await (await fetch(`${a.url}api/status`)).json()) as { baseline: { file: string } | null }).baseline?.file,
        { timeout: 10_000 },
      )
      .toBe(file);
    await expect
      .poll(
        () =>
          existsSync(join(dir, 'data', 'events.jsonl')) ? readFileSync(join(dir, 'data', 'events.jsonl'), 'utf8') : '',
        { timeout: 10_000 },
      )
      .toContain(`comparing against baseline ${file}`);
  });

  it('is usable from the keyboard: arrow keys move the chart readout, m toggles max-hold, u steps the unit', async () => {
    await page.focus('#spectrum');
    await page.keyboard.press('ArrowRight');
    await page.keyboard.press('Shift+ArrowRight');
    expect(await page.textContent('#readout')).toMatch(/^f = [0-9.]+ k?Hz · ch0: .*V\/√Hz, line .*V rms at/);
    await page.keyboard.press('m');
    expect(await page.isChecked('#maxhold')).toBe(true);
    await page.keyboard.press('u');
    expect(await page.inputValue('#units')).toBe('dbv');
    await page.keyboard.press('u');
    await page.keyboard.press('u');
    expect(await page.inputValue('#units')).toBe('asd');
    await page.keyboard.press('m');
    // Tab order reaches the controls: from the units list the next stop is the max-hold box.
    await page.focus('#units');
    await page.keyboard.press('Tab');
    expect(await page.evaluate('document.activeElement.id')).toBe('maxhold');
  });

  it('draws the expected floor of the noise budget entered, the quadrature sum of its parts', async () => {
    await page.click('.budget summary');
    await page.check('#nb-show');
    const text = (await page.textContent('#nb-result'))!;
    // Defaults: 1 kΩ at 296 K, eₙ 4 nV/√Hz, iₙ 0.5 pA/√Hz, 24-bit ADC over 5 V at 8 kS/s, gain 1. Independent sum with
    // scipy.constants.k (CODATA) and the quantisation density q/sqrt(6·fs), q = span/2^bits (common practice).
    const py =
      'from scipy.constants import k; import math; j = math.sqrt(4*k*296*1000); q = 5/2**24/math.sqrt(6*8000); print(math.sqrt(j*j + 4e-9**2 + (0.5e-12*1000)**2 + q*q))';
    const expected = Number(execFileSync('python3', ['-c', py], { encoding: 'utf8' }));
    const shown = Number(/^total ([0-9.]+) nV\/√Hz/.exec(text)![1]) * 1e-9;
    expect(Math.abs(shown / expected - 1)).toBeLessThan(0.002); // 3 significant figures shown
    // The overlay series is now shown (uPlot greys the legend entry of hidden series).
    expect(
      await page.locator('.u-legend .u-series', { hasText: 'expected floor' }).first().getAttribute('class'),
    ).not.toMatch(/u-off/);
    await page.uncheck('#nb-show');
  });

  it('exports the spectrum as CSV that numpy reads, with its context header and units row', async () => {
    const [dl] = await Promise.all([page.waitForEvent('download'), page.click('#export-csv')]);
    const path = join(dir, 'spectrum.csv');
    await dl.saveAs(path);
    const text = readFileSync(path, 'utf8');
    expect(text).toMatch(/^# floorline spectrum\n/);
    expect(Number(/\n# enbw_hz,(\S+)\n/.exec(text)![1])).toBeCloseTo(1.5 * (8000 / 4096), 12); // Hann: 1.5 bins × 8000/4096 Hz
    const lines = text.split('\n').filter((l) => !l.startsWith('#'));
    expect(lines[0]).toBe('frequency,ch0,ch1');
    expect(lines[1]).toBe('Hz,V/√Hz,V/√Hz');
    const skip = text.split('\n').findIndex((l) => /^[0-9]/.test(l)); // '#' context lines, the names row and the units row
    const py = `import numpy as np; a = np.loadtxt(${JSON.stringify(path)}, delimiter=',', skiprows=${skip}, encoding='utf-8'); print(a.shape[0], a.shape[1], a[1,0], a[-1,0])`;
    const out = execFileSync('python3', ['-c', py], { encoding: 'utf8' }).trim().split(' ');
    expect(out.map(Number)).toEqual([2049, 3, 8000 / 4096, 4000]);
  });

  it('exports the chart as a PNG of the canvas size with a legend and the spectral context under it', async () => {
    const [dl] = await Promise.all([page.waitForEvent('download'), page.click('#export-png')]);
    const path = join(dir, 'spectrum.png');
    await dl.saveAs(path);
    const png = readFileSync(path);
    // PNG signature and IHDR (ISO/IEC 15948 §5.2, §11.2.2): width and height big-endian at bytes 16 and 20.
    expect([...png.subarray(0, 8)]).toEqual([0x89, 0x50, 0x4e, 0x47, 0x0d, 0x0a, 0x1a, 0x0a]);
    const size: [number, number] = await page.evaluate(
      `(() => { const c = document.querySelector('#spectrum canvas'); return [c.width, c.height]; })()`,
    );
    expect(png.readUInt32BE(16)).toBe(size[0]);
    // dashboard/export.ts PNG_CAPTION_PX (44 CSS px: legend row, then context and time), at the canvas's pixel ratio.
    const ratio: number = await page.evaluate(
      `(() => { const c = document.querySelector('#spectrum canvas'); return c.width / c.clientWidth; })()`,
    );
    expect(png.readUInt32BE(20)).toBe(size[1] + Math.round(44 * ratio));
  });

  it('starts and stops a recording from the button, writing a WAV into the data folder', async () => {
    await page.click('#recording');
    await expect.poll(() => page.textContent('#recording'), { timeout: 10_000 }).toBe('Stop recording');
    // The recorder opens its file with the first block after the start: wait for the status to name it.
    let file: string | undefined;
    await expect
      .poll(async () => (file = ((await (await fetch(`${a.url}api/status`)).json()) as AgentStatus).recording.file), {
        timeout: 10_000,
      })
      .toMatch(/^recordings\/.+\.wav$/);
    await new Promise((r) => setTimeout(r, 1500));
    await page.click('#recording');
    await expect.poll(() => page.textContent('#recording'), { timeout: 10_000 }).toBe('Start recording');
    expect(file).toMatch(/^recordings\/.+\.wav$/);
    // scipy reads it: float32, 2 channels at 8 kS/s (the recording format of docs/ARCHITECTURE.md).
    const py = `from scipy.io import wavfile; r, x = wavfile.read(${JSON.stringify(join(dir, 'data', file!))}); print(r, x.dtype, x.shape[1], x.shape[0] > 0)`;
    expect(execFileSync('python3', ['-c', py], { encoding: 'utf8' }).trim()).toBe('8000 float32 2 True');
  });

  it('changes the segment length from the controls after a warning; the agent and the chart follow, and a banner says the baseline comparison is off', async () => {
    // The baseline captured above compares at segment 4096: leaving its settings must not happen silently.
    await waitUntil(
      page,
      `window.floorline.status && window.floorline.status.bands.some((b) => b.thresholdDb !== null)`,
      15_000,
    );
    await page.selectOption('#segment', '2048');
    await page.click('#apply-analysis');
    expect(await page.textContent('#control-message')).toMatch(/band alarms stop comparing.*Press again/);
    const before = (await (await fetch(`${a.url}api/status`)).json()) as AgentStatus;
    expect(before.settings?.segment).toBe(4096); // nothing sent yet
    await page.click('#apply-analysis');
    await waitUntil(page, `/segment 2048/.test(document.getElementById('spectral-context').textContent)`, 15_000);
    const st = (await (await fetch(`${a.url}api/status`)).json()) as AgentStatus;
    expect(st.settings?.segment).toBe(2048);
    expect(await page.textContent('#spectral-context')).toMatch(/bin 3\.906 Hz/); // 8000 / 2048
    await waitUntil(page, `!document.getElementById('comparison-banner').hidden`, 15_000);
    expect(await page.textContent('#comparison-text')).toMatch(/Baseline comparison off since t = [\d.]+ s/);
    // One click back to the baseline's settings.
    await page.click('#comparison-restore');
    try {
      await expect
        .poll(() => page.textContent('#control-message'), { timeout: 15_000 })
        .toMatch(/back to segment 4096/);
    } catch (e) {
      // Say why the link went, if it did: the page's close code and reason, and the agent's own lines.
      const closed = await page.evaluate('document.body.dataset.lastClose ?? "no close"');
      throw new Error(`${(e as Error).message}\npage link: ${String(closed)}\nagent said:\n${a.output().slice(-3000)}`);
    }
    await waitUntil(page, `/segment 4096/.test(document.getElementById('spectral-context').textContent)`, 15_000);
    // And the agent compares again: the band rows carry thresholds, the banner goes, and the event log says so.
    await waitUntil(
      page,
      `document.getElementById('comparison-banner').hidden && window.floorline.status.bands.some((b) => b.thresholdDb !== null)`,
      20_000,
    );
    const again = (await (await fetch(`${a.url}api/status`)).json()) as AgentStatus;
    const rows = again.bands.filter((b) => b.thresholdDb !== null);
    expect(rows.length).toBeGreaterThanOrEqual(4);
    expect(await page.textContent('#events')).toMatch(/baseline comparison resumed/);
  });

  it('holds a drag-zoom on the spectrum through 50 new frames, and resets it with a double-click', async () => {
    const box = (await page.locator('#spectrum .u-over').boundingBox())!;
    await page.mouse.move(box.x + box.width * 0.4, box.y + box.height / 2);
    await page.mouse.down();
    await page.mouse.move(box.x + box.width * 0.6, box.y + box.height / 2, { steps: 5 });
    await page.mouse.up();
    const xs = () =>
      page.evaluate(
        `[window.floorline.spectrum.plot.scales.x.min, window.floorline.spectrum.plot.scales.x.max, window.floorline.spectrum.plot.scales.y.min]`,
      ) as Promise<number[]>;
    const zoomed = await xs();
    const start = await applied(page);
    await expect.poll(() => applied(page), { timeout: 20_000 }).toBeGreaterThan(start + 50);
    expect(await xs()).toEqual(zoomed);
    // uPlot's documented reset on double-click: the whole spectrum, first bin to Nyquist (8000 / 2).
    await page.mouse.dblclick(box.x + box.width / 2, box.y + box.height / 2);
    await expect.poll(async () => (await xs())[1], { timeout: 5_000 }).toBe(4000);
  });
});

describe('alarms and restarts', () => {
  it('plays the bundled demo: its mains pickup and band floor rise appear as alarms at their sample times (4×), and an alarm can be acknowledged', async () => {
    // Scripted in recordings/README.md: mains pickup on `bridge` from t = 20 s, floor rise in 300–1200 Hz at 38–46 s.
    const a = await agent(['demo', '--speed', '4', '--http-port', '0', '--data', join(dir, 'data-demo')]);
    const page = await openDashboard(a.url);
    expect(await page.textContent('#replay-banner')).toMatch(/Replaying .*demo\.wav .* at 4×, looping/);
    expect(await tracePixels(page, [0x00, 0x72, 0xb2])).toBeGreaterThan(300);
    // Rows are newest first: the last matching row is the first raise.
    const mains = page
      .locator('#events tbody tr[data-rule="mains"][data-state="raised"][data-channel="bridge"]')
      .last();
    // Generous waits: on a loaded 2-core machine the page can fall seconds behind the agent (it draws the newest
    // frame only); the checks below are on sample times, so waiting longer cannot make a wrong answer pass.
    await mains.waitFor({ state: 'attached', timeout: 90_000 });
    const tm = Number(await mains.locator('td').first().textContent());
    expect(tm).toBeGreaterThanOrEqual(20);
    expect(tm).toBeLessThan(26);
    // Mains is raised from 20 s to the loop seam at 60 s. A click that a slow machine delivers after the seam gets
    // the agent's "no mains alarm … is active any more"; then the next loop's raise is clicked. The test waits on
    // the agent's reply and on new rows, never on how long anything takes. The reply says the alarm rules took it
    // (result.acknowledged); later raises of other harmonics ask again, so the status is not polled here (the
    // server tests cover the status rows).
    const mainsRaised = page.locator('#events tbody tr[data-rule="mains"][data-state="raised"][data-channel="bridge"]');
    const message = page.locator('#control-message');
    let reply = '';
    for (let attempt = 0; !reply.startsWith('acknowledged: mains on bridge'); attempt++) {
      expect(attempt, `replies so far ended with: ${reply}`).toBeLessThan(4);
      const rowsBefore = await mainsRaised.count();
      await message.evaluate((el) => (el.textContent = ''));
      await mainsRaised.first().locator('button.ack').click();
      await expect.poll(() => message.textContent(), { timeout: 30_000 }).toMatch(/^acknowledge/);
      reply = (await message.textContent()) ?? '';
      if (!reply.startsWith('acknowledged')) {
        expect(reply).toMatch(/no mains alarm on bridge is active any more/);
        await expect.poll(() => mainsRaised.count(), { timeout: 30_000 }).toBeGreaterThan(rowsBefore);
      }
    }
    const rise = page
      .locator('#events tbody tr[data-rule="band-rise"][data-state="raised"][data-channel="bridge"]')
      .last();
    await rise.waitFor({ state: 'attached', timeout: 90_000 });
    const tr = Number(await rise.locator('td').first().textContent());
    expect(tr).toBeGreaterThanOrEqual(38);
    expect(tr).toBeLessThan(48);
    await page.screenshot({ path: join(ARTIFACTS, 'dashboard-demo-alarms.png') });
    await page.close();
    await a.stop();
  }, 300_000);

  it('with a token: refuses the page without it, and with the printed ?token= URL serves page and socket', async () => {
    const token = 'b7e1c0de5a1f00d2b7e1c0de5a1f00d2';
    const a = await agent([
      'replay',
      join(dir, 'fault.wav'),
      '--scale',
      '1',
      '--loop',
      '--token',
      token,
      '--show-token',
      '--http-port',
      '0',
      '--data',
      join(dir, 'data-token'),
    ]);
    expect(a.url).toContain(`?token=${token}`);
    const bare = a.url.replace(/\?token=.*$/, '');
    const page = await browser.newPage();
    const r = await page.goto(bare);
    expect(r?.status()).toBe(401);
    await page.close();
    const ok = await openDashboard(a.url);
    expect(await ok.getAttribute('body', 'data-link')).toBe('up');
    await ok.close();
    await browser.clearCookies();
    await a.stop();
  });

  it('reconnects and shows live data again after the agent restarts on the same port', async () => {
    const port = await freePort();
    const args = [
      'replay',
      join(dir, 'fault.wav'),
      '--scale',
      '1',
      '--loop',
      '--http-port',
      String(port),
      '--data',
      join(dir, 'data-restart'),
    ];
    const first = await agent(args);
    const page = await openDashboard(first.url);
    await first.stop();
    await waitUntil(page, `document.body.dataset.link === 'down'`, 10_000);
    const before = await applied(page);
    const second = await agent(args);
    await waitUntil(page, `document.body.dataset.link === 'up'`, 15_000);
    await expect.poll(() => applied(page), { timeout: 15_000 }).toBeGreaterThan(before + 3);
    expect(await tracePixels(page, [0x00, 0x72, 0xb2])).toBeGreaterThan(300);
    await page.close();
    await second.stop();
  });
});
