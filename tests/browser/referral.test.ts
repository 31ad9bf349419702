// The input-referred / at-ADC switch and the noise budget pre-filled from the recording's sidecar, in real headless
// Chromium against `floorline replay recordings/demo.wav` (sidecar: gain 100, budget 350 Ω at 296 K, 6 nV/√Hz,
// 0.2 pA/√Hz). References: scipy.signal.welch of the same recording span, and Johnson noise √(4kTR) (Johnson 1928,
// Nyquist 1928).
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { execFileSync } from 'node:child_process';
import { mkdtempSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import type { BrowserContext, Page } from 'playwright-core';
import { waitUntil } from './support/page.ts';
import { launchChromium } from './support/browser.ts';
import { startAgent, type Agent } from './support/agent.ts';

const ROOT = new URL('../../', import.meta.url).pathname;
const DEMO = join(ROOT, 'recordings', 'demo.wav');
const dir = mkdtempSync(join(tmpdir(), 'floorline-referral-'));
let browser: BrowserContext;
let agent: Agent;
let page: Page;

/** scipy.signal.welch (Hann, 4096, 50 %, mean detrend: the agent's defaults) of the bridge channel over 0–18 s, the
 * demo's quiet span: √(mean PSD over 900–1100 Hz) at the ADC. */
function scipyBridgeAsdAt1k(): number {
  const out = execFileSync('python3', [
    '-c',
    `import warnings; warnings.simplefilter('ignore')
import numpy as np, scipy.io.wavfile as w, scipy.signal as s
r, x = w.read(${JSON.stringify(DEMO)})
f, p = s.welch(x[:18 * r, 0].astype(np.float64), fs=r, window='hann', nperseg=4096, noverlap=2048, detrend='constant')
m = (f >= 900) & (f <= 1100)
print(repr(float(np.sqrt(np.mean(p[m])))))`,
  ]);
  return Number(out.toString().trim());
}

/** The page's bridge ASD, referred to the point shown, as √(mean PSD over 900–1100 Hz) of the newest frame. */
const pageBridgeAsd = `(() => {
  const a = window.floorline, f = a.spectrum.frame, k = a.spectrum.psdFactors()[0];
  let s = 0, n = 0;
  for (let i = 0; i < f.length; i++) { const hz = i * f.binHz; if (hz >= 900 && hz <= 1100) { s += f.values[0][i] * k; n++; } }
  return { asd: Math.sqrt(s / n), t: f.sample / f.sampleRate };
})()`;

// The y axis label uPlot draws on the canvas (the chart's own options object).
const axisLabel = `window.floorline.spectrum.plot.axes[1].label`;

beforeAll(async () => {
  browser = await launchChromium();
  agent = await startAgent(['replay', DEMO, '--http-port', '0', '--data', join(dir, 'data')]);
  page = await browser.newPage();
  await page.goto(agent.url);
  await waitUntil(page, 'window.floorline !== undefined && window.floorline.spectraApplied >= 3', 60_000);
}, 120_000);
afterAll(async () => {
  await agent?.stop();
  await browser?.close();
});

describe('input-referred and at-ADC views of the demo bridge', () => {
  it('offers the switch, labels the unit with the point, and moves the spectrum by the gain', async () => {
    expect(await page.isVisible('#refer')).toBe(true);
    // Samples of demo.wav are at the ADC (the sidecar has no calibration), so the page starts there.
    expect(await page.inputValue('#refer')).toBe('adc');
    await waitUntil(page, `${axisLabel}.includes('V/√Hz (ADC)')`, 30_000);
    const adc = (await page.evaluate(pageBridgeAsd)) as { asd: number };
    await page.selectOption('#refer', 'input');
    await waitUntil(page, `${axisLabel}.includes('V/√Hz (input)')`, 30_000);
    expect(await page.evaluate('window.floorline.spectrum.psdFactors()[0]')).toBeCloseTo(1e-4, 15); // 1/gain², gain 100 from the sidecar
    const input = (await page.evaluate(pageBridgeAsd)) as { asd: number };
    // The page's own input-referred floor in the quiet span (0–18 s) agrees with scipy.signal.welch of it ÷ 100.
    await waitUntil(page, `(${pageBridgeAsd}).t >= 8`, 60_000);
    const m = (await page.evaluate(pageBridgeAsd)) as { asd: number; t: number };
    expect(m.t, 'the page fell behind past the quiet span').toBeLessThan(18);
    expect(Math.abs(20 * Math.log10(m.asd / (scipyBridgeAsdAt1k() / 100)))).toBeLessThan(1);
    // Same frame or a later one of a stationary floor: ÷ 100 within 1 dB (exponential averaging moves it a little).
    expect(Math.abs(20 * Math.log10(adc.asd / 100 / input.asd))).toBeLessThan(1);
    // The band table follows: every bridge row's unit names the input.
    await waitUntil(
      page,
      `Array.from(document.querySelectorAll('#bands tbody tr[data-channel="bridge"] td:nth-child(3)')).some((td) => td.textContent.includes('(input)'))`,
      30_000,
    );
  }, 120_000);

  it('pre-fills the noise budget from the sidecar and lands on the measured input-referred floor at 1 kHz within 1 dB', async () => {
    await page.selectOption('#refer', 'input');
    expect(await page.inputValue('#nb-r')).toBe('350');
    expect(await page.inputValue('#nb-gain')).toBe('100');
    expect(await page.isChecked('#nb-show')).toBe(true);
    // Johnson noise of 350 Ω at 296 K: √(4kTR) = 2.39 nV/√Hz (Johnson 1928, Nyquist 1928; k = 1.380649e-23 J/K, SI 2019).
    const johnson = Math.sqrt(4 * 1.380649e-23 * 296 * 350);
    await waitUntil(page, `document.querySelector('#nb-result').textContent.includes('total')`, 30_000);
    expect(await page.textContent('#nb-result')).toContain(
      `source R (Johnson) ${(johnson * 1e9).toPrecision(3)} nV/√Hz`,
    );
    const overlay = (await page.evaluate('window.floorline.spectrum.floor[0]')) as number;
    const scipyInput = scipyBridgeAsdAt1k() / 100; // scipy.signal.welch, ÷ gain 100 for the input
    expect(Math.abs(20 * Math.log10(overlay / scipyInput))).toBeLessThan(1);
    // At the ADC the overlay is the same budget times the gain.
    await page.selectOption('#refer', 'adc');
    await waitUntil(page, `Math.abs(window.floorline.spectrum.floor[0] / ${overlay} - 100) < 1e-9`, 30_000);
  }, 180_000);

  it('draws the cumulative RMS on its own axis; it equals numpy cumsum of the same PSD and ends at the total RMS', async () => {
    const box = page.getByRole('checkbox', { name: 'Cumulative RMS' });
    await box.check();
    await waitUntil(page, 'window.floorline.spectrum.cumulative(0) !== null', 30_000);
    // One frame and the cumulative drawn from it, read together (the page is single-threaded).
    const got = (await page.evaluate(`(() => {
      const s = window.floorline.spectrum, f = s.frame;
      return { psd: Array.from(f.values[0]), k: s.psdFactors()[0], binHz: f.binHz, cum: Array.from(s.cumulative(0)),
               axis: s.plot.axes[2].label };
    })()`)) as { psd: number[]; k: number; binHz: number; cum: number[]; axis: string };
    expect(got.axis).toMatch(/^V rms \((input|ADC)\), cumulative$/);
    const ref = execFileSync(
      'python3',
      [
        '-c',
        // numpy: √(cumsum(psd[1:])·Δf), from the first non-DC bin up, the Riemann sum analyze --cumulative uses.
        `import json, sys, numpy as np
d = json.load(sys.stdin)
p = np.array(d['psd'], dtype=np.float64) * d['k']
c = np.sqrt(np.cumsum(p[1:]) * d['binHz'])
print(json.dumps({'cum': c.tolist(), 'total': float(np.sqrt(np.sum(p[1:]) * d['binHz']))}))`,
      ],
      { input: JSON.stringify(got) },
    );
    const r = JSON.parse(ref.toString()) as { cum: number[]; total: number };
    expect(got.cum.length).toBe(r.cum.length);
    let worst = 0;
    for (let i = 0; i < r.cum.length; i++)
      if (r.cum[i] > 0) worst = Math.max(worst, Math.abs(got.cum[i] / r.cum[i] - 1));
    expect(worst).toBeLessThan(1e-9);
    expect(Math.abs(got.cum[got.cum.length - 1] / r.total - 1)).toBeLessThan(1e-9);
    await box.uncheck();
    await waitUntil(page, 'window.floorline.spectrum.cumulative(0) === null', 30_000);
  }, 120_000);

  it('shows NF and T_e in the cursor readout, matching the scipy floor against the Johnson noise of the source', async () => {
    // Cursor at mid-spectrum (2 kHz: the demo's white floor, no lines there) with the keyboard.
    await page.focus('#spectrum');
    await page.keyboard.press('ArrowRight');
    await waitUntil(page, `document.querySelector('#readout').textContent.includes('NF ')`, 30_000);
    const text = (await page.textContent('#readout'))!;
    // The readout's spectrum is still before the scripted clip at 52 s (recordings/README.md), whose broadband
    // energy would lift the floor at 2 kHz for the rest of the pass.
    const at = ((await page.evaluate(pageBridgeAsd)) as { t: number }).t;
    expect(at, 'the page read the floor after the clip').toBeLessThan(52);
    const nf = Number(/bridge: [^·]*NF (-?[0-9.]+) dB/.exec(text)?.[1]);
    // NF = 10·log10(e_meas² / 4kTR) for a measurement that includes the source (common practice), with e_meas from
    // scipy.signal.welch of 0–18 s ÷ gain 100 and 4kTR of 350 Ω at 296 K (Johnson 1928, Nyquist 1928).
    const e = scipyBridgeAsdAt1k() / 100;
    const expected = 10 * Math.log10((e * e) / (4 * 1.380649e-23 * 296 * 350));
    expect(Math.abs(nf - expected)).toBeLessThan(1);
  }, 120_000);
});
