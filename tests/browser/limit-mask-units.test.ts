// Limit masks drawn on the spectrum and the converter units (dBFS/√Hz, LSB/√Hz), in real headless Chromium against
// `floorline replay recordings/demo.wav --mask FILE`. References: numpy.interp on log f and log L of the mask file
// (the log-log interpolation the limit rule uses), and numpy for dBFS (AES17: 0 dBFS = RMS of a full-scale sine,
// FS/√2) and LSB of the figures /api/status reports, with full scale and step from the recording's sidecar.
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { execFileSync } from 'node:child_process';
import { mkdtempSync, readFileSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import type { BrowserContext, Page } from 'playwright-core';
import { launchChromium } from './support/browser.ts';
import { waitUntil as pollPage } from './support/page.ts';
import { startAgent, type Agent } from './support/agent.ts';

const ROOT = new URL('../../', import.meta.url).pathname;
const DEMO = join(ROOT, 'recordings', 'demo.wav');
const SIDECAR = JSON.parse(readFileSync(`${DEMO}.json`, 'utf8')) as {
  channels: { name: string; scale: number; fullScaleCounts: number }[];
};
const dir = mkdtempSync(join(tmpdir(), 'floorline-mask-'));
const MASK = join(dir, 'bridge-limit.csv');
// An invented limit of our own, in µV/√Hz: falling to 1 kHz, then rising (two slopes on log-log axes).
writeFileSync(MASK, 'frequency,limit,unit\n2,20,uV/√Hz\n100,2.5,uV/√Hz\n1000,1,uV/√Hz\n3500,1.6,uV/√Hz\n');
let browser: BrowserContext;
let agent: Agent;
let page: Page;

const waitUntil = (p: Page, expression: string, timeoutMs: number): Promise<void> =>
  pollPage(p, expression, timeoutMs, () => agent?.output() ?? '');

function numpy(script: string, input: unknown): unknown {
  const out = execFileSync('python3', ['-c', `import json, sys, numpy as np\nd = json.load(sys.stdin)\n${script}`], {
    input: JSON.stringify(input),
  });
  return JSON.parse(out.toString());
}

/** The plotted series of uPlot by its legend label: x values and y values, as the chart holds them. */
const series = (label: string): string => `(() => {
  const p = window.floorline.spectrum.plot, i = p.series.findIndex((s) => s.label === ${JSON.stringify(label)});
  if (i < 0) return null;
  return { x: Array.from(p.data[0]), y: Array.from(p.data[i], (v) => (Number.isFinite(v) ? v : null)),
           show: p.series[i].show, axis: p.axes[1].label };
})()`;

/** numpy.interp of log L against log f of the mask file (V/√Hz), NaN (null) outside the mask's span. */
function numpyMask(x: number[], scale = 1, db = false): (number | null)[] {
  return numpy(
    `f, l = np.loadtxt(${JSON.stringify(MASK)}, delimiter=',', skiprows=1, usecols=(0, 1), unpack=True)
l = l * 1e-6  # uV/√Hz -> V/√Hz
x = np.array(d['x'])
y = np.exp(np.interp(np.log(x), np.log(f), np.log(l))) * d['scale']
if d['db']: y = 20 * np.log10(y)
y[(x < f[0]) | (x > f[-1])] = np.nan
print(json.dumps([None if np.isnan(v) else float(v) for v in y]))`,
    { x, scale, db },
  ) as (number | null)[];
}

function worstDifference(got: (number | null)[], want: (number | null)[], relative: boolean): number {
  expect(got.length).toBe(want.length);
  let worst = 0;
  for (let i = 0; i < want.length; i++) {
    const g = got[i];
    const w = want[i];
    if (w === null || g === null) {
      expect(g, `bin ${i}: drawn where the mask does not reach, or missing where it does`).toBe(w);
      continue;
    }
    worst = Math.max(worst, relative ? Math.abs(g / w - 1) : Math.abs(g - w));
  }
  return worst;
}

beforeAll(async () => {
  browser = await launchChromium();
  agent = await startAgent(['replay', DEMO, '--http-port', '0', '--data', join(dir, 'data'), '--mask', MASK]);
  page = await browser.newPage();
  await page.goto(agent.url);
  await waitUntil(page, 'window.floorline !== undefined && window.floorline.spectraApplied >= 3', 90_000);
  await waitUntil(page, 'window.floorline.spectrum.maskLine(0) !== null', 60_000);
}, 180_000);
afterAll(async () => {
  await agent?.stop();
  await browser?.close();
});

describe('limit masks on the spectrum', () => {
  it('draws the mask of each channel where numpy.interp in log-log of the file puts it, and refers it like the traces', async () => {
    await page.selectOption('#units', 'asd');
    await page.selectOption('#refer', 'adc');
    await waitUntil(page, `(${series('bridge limit mask')})?.axis.includes('V/√Hz (ADC)')`, 30_000);
    const adc = (await page.evaluate(series('bridge limit mask'))) as {
      x: number[];
      y: (number | null)[];
      show: boolean;
    };
    expect(adc.show).toBe(true);
    // demo.wav's samples arrive at the ADC (no rig calibration), so the mask is referred there and drawn as given.
    expect(worstDifference(adc.y, numpyMask(adc.x), true)).toBeLessThan(1e-9);
    // The --mask file holds for every channel: the shorted input has the same line.
    const shorted = (await page.evaluate(series('shorted limit mask'))) as { y: (number | null)[] };
    expect(worstDifference(shorted.y, numpyMask(adc.x), true)).toBeLessThan(1e-9);
    // Referred to the amplifier input, the bridge's mask moves by the gain 100 of the sidecar like its trace
    // (a voltage gain G scales a density by G, common practice); the shorted input (gain 1) stays.
    await page.selectOption('#refer', 'input');
    await waitUntil(page, `(${series('bridge limit mask')})?.axis.includes('V/√Hz (input)')`, 30_000);
    const input = (await page.evaluate(series('bridge limit mask'))) as { x: number[]; y: (number | null)[] };
    expect(worstDifference(input.y, numpyMask(input.x, 1 / 100), true)).toBeLessThan(1e-9);
    await page.selectOption('#refer', 'adc');
  }, 120_000);

  it('draws the mask in dBFS/√Hz as numpy converts the file: 20·log10(L·√2/FS)', async () => {
    await page.selectOption('#units', 'dbfs');
    await waitUntil(page, `(${series('bridge limit mask')})?.axis === 'dBFS/√Hz'`, 30_000);
    const fs = SIDECAR.channels[0].fullScaleCounts * SIDECAR.channels[0].scale;
    const m = (await page.evaluate(series('bridge limit mask'))) as { x: number[]; y: (number | null)[] };
    expect(worstDifference(m.y, numpyMask(m.x, Math.SQRT2 / fs, true), false)).toBeLessThan(1e-9);
  }, 120_000);
});

describe('dBFS/√Hz and LSB/√Hz views', () => {
  /** The status the page shows and its band table, read in one go (the page updates both in one call). */
  const tableAndStatus = `(() => {
    const a = window.floorline;
    const rows = Array.from(document.querySelectorAll('#bands tbody tr')).map((tr) => ({
      channel: tr.dataset.channel, band: tr.dataset.band, rms: Number(tr.cells[2].dataset.value),
      floor: Number(tr.cells[6].dataset.value), text: tr.cells[6].textContent, rmsText: tr.cells[2].textContent }));
    return { rows, bands: a.status.bands.map((b) => ({ channel: b.channel, band: b.low + '-' + b.high, rms: b.rms,
      floor: b.floorDensity })), axis: a.spectrum.plot.axes[1].label, menu: Array.from(document.querySelectorAll('#units option'), (o) => o.value) };
  })()`;

  interface TableAndStatus {
    rows: { channel: string; band: string; rms: number; floor: number; text: string; rmsText: string }[];
    bands: { channel: string; band: string; rms: number; floor: number }[];
    axis: string;
    menu: string[];
  }

  /** Chooses a unit, waits until the band table's floor column shows it, and reads table and status together. */
  async function tableIn(unit: string, label: string): Promise<TableAndStatus> {
    await page.selectOption('#units', unit);
    await waitUntil(
      page,
      `document.querySelector('#bands tbody tr td:nth-child(7)')?.textContent.includes(${JSON.stringify(label)})`,
      60_000,
    );
    return (await page.evaluate(tableAndStatus)) as TableAndStatus;
  }

  it('offers dBFS and LSB for the demo (its sidecar has full scale and step); the band table equals numpy of the status', async () => {
    const got = await tableIn('dbfs', 'dBFS/√Hz');
    expect(got.menu).toEqual(['asd', 'dbv', 'psd', 'dbfs', 'lsb']);
    expect(got.axis).toBe('dBFS/√Hz');
    expect(await page.isDisabled('#refer')).toBe(true);
    expect(got.rows.length).toBeGreaterThan(0);
    const ref = numpy(
      `fs = {c['name']: c['fullScaleCounts'] * c['scale'] for c in d['sidecar']['channels']}
out = [{'floor': float(20 * np.log10(b['floor'] * np.sqrt(2) / fs[b['channel']])),
         'rms': float(20 * np.log10(b['rms'] * np.sqrt(2) / fs[b['channel']]))} for b in d['bands']]
print(json.dumps(out))`,
      { sidecar: SIDECAR, bands: got.bands },
    ) as { floor: number; rms: number }[];
    for (const [i, b] of got.bands.entries()) {
      const row = got.rows.find((r) => r.channel === b.channel && r.band === b.band)!;
      expect(row, `row ${b.channel} ${b.band}`).toBeDefined();
      expect(Math.abs(row.floor - ref[i].floor)).toBeLessThan(1e-9);
      expect(Math.abs(row.rms - ref[i].rms)).toBeLessThan(1e-9);
      expect(row.text).toBe(`${ref[i].floor.toFixed(1)} dBFS/√Hz`);
      expect(row.rmsText).toBe(`${ref[i].rms.toFixed(1)} dBFS`);
    }
  }, 120_000);

  it('plots the trace in dBFS/√Hz as numpy converts the frame: 10·log10(2·PSD/FS²)', async () => {
    await page.selectOption('#units', 'dbfs');
    await waitUntil(page, `window.floorline.spectrum.plot.axes[1].label === 'dBFS/√Hz'`, 30_000);
    const got = (await page.evaluate(`(() => {
      const s = window.floorline.spectrum, f = s.frame, p = s.plot;
      return { psd: Array.from(f.values[1]), drawn: Array.from(p.data[2], (v) => (Number.isFinite(v) ? v : null)) };
    })()`)) as { psd: number[]; drawn: (number | null)[] };
    const fs = SIDECAR.channels[1].fullScaleCounts * SIDECAR.channels[1].scale;
    const ref = numpy(
      `p = np.array(d['psd'][1:])
print(json.dumps([float(v) for v in 10 * np.log10(2 * p / d['fs'] ** 2)]))`,
      { psd: got.psd, fs },
    ) as number[];
    expect(worstDifference(got.drawn, ref, false)).toBeLessThan(1e-9);
  }, 120_000);

  it('shows LSB/√Hz (density ÷ converter step) and the readout follows; the u key steps through the menu', async () => {
    const got = await tableIn('lsb', 'LSB/√Hz');
    expect(got.axis).toBe('LSB/√Hz');
    const lsb = SIDECAR.channels[0].scale; // 2.98e-7 V per count at the ADC, both channels
    const ref = numpy(`print(json.dumps([b['floor'] / d['lsb'] for b in d['bands']]))`, {
      bands: got.bands,
      lsb,
    }) as number[];
    for (const [i, b] of got.bands.entries()) {
      const row = got.rows.find((r) => r.channel === b.channel && r.band === b.band)!;
      expect(Math.abs(row.floor / ref[i] - 1)).toBeLessThan(1e-12);
    }
    await page.focus('#spectrum');
    await page.keyboard.press('ArrowRight');
    await waitUntil(page, `document.querySelector('#readout').textContent.includes('LSB/√Hz')`, 30_000);
    expect(await page.textContent('#readout')).toMatch(/line [0-9.e+-]+ LSB rms/);
    // u from the last entry wraps to the first; the referral switch comes back.
    await page.locator('body').press('u');
    await waitUntil(page, `window.floorline.spectrum.unitChoice === 'asd'`, 30_000);
    expect(await page.isDisabled('#refer')).toBe(false);
    await page.locator('body').press('u');
    await waitUntil(page, `window.floorline.spectrum.unitChoice === 'dbv'`, 30_000);
  }, 120_000);
});
