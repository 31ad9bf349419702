// The cursor readout names each channel's own unit: a recording of a current probe (A) beside a voltage sense line
// (V), written by numpy/scipy.io.wavfile with its sidecar, replayed by the real agent and read in headless Chromium.
// Reference: scipy.signal.welch of the same samples (Hann, 4096, 50 %, mean detrend: the agent's defaults), mean
// density over 100 bins within 1 dB (the page's exponential average of a white floor against the whole file's mean).
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { execFileSync } from 'node:child_process';
import { mkdtempSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import type { BrowserContext, Page } from 'playwright-core';
import { waitUntil } from './support/page.ts';
import { launchChromium } from './support/browser.ts';
import { startAgent, type Agent } from './support/agent.ts';

const dir = mkdtempSync(join(tmpdir(), 'floorline-readout-units-'));
const WAV = join(dir, 'probe-and-sense.wav');
let browser: BrowserContext;
let agent: Agent;
let page: Page;

function python(code: string): string {
  return execFileSync('python3', ['-c', code]).toString().trim();
}

beforeAll(async () => {
  // White noise of 2 nA/√Hz on the probe and 3 µV/√Hz on the sense line: σ = density·√(fs/2).
  python(`import numpy as np, scipy.io.wavfile as w
fs = 8000; n = 40 * fs; g = np.random.default_rng(61)
x = np.stack([g.normal(0, 2e-9 * np.sqrt(fs / 2), n), g.normal(0, 3e-6 * np.sqrt(fs / 2), n)], axis=1)
w.write(${JSON.stringify(WAV)}, fs, x.astype(np.float32))`);
  writeFileSync(
    `${WAV}.json`,
    JSON.stringify({
      schema: 'floorline.recording/1',
      sampleRate: 8000,
      firstSample: 0,
      channels: [
        { name: 'probe', unit: 'A' },
        { name: 'sense', unit: 'V' },
      ],
    }),
  );
  browser = await launchChromium();
  agent = await startAgent(['replay', WAV, '--loop', '--http-port', '0', '--data', join(dir, 'data')]);
  page = await browser.newPage();
  await page.goto(agent.url);
  await waitUntil(
    page,
    'window.floorline !== undefined && window.floorline.spectraApplied >= 40',
    90_000,
    agent.output,
  );
}, 180_000);

afterAll(async () => {
  await browser?.close();
  await agent?.stop();
});

describe('cursor readout with channels in different units', () => {
  it('labels the probe in A/√Hz and the sense line in V/√Hz, with the values of the frame shown', async () => {
    await page.focus('#spectrum');
    await page.keyboard.press('ArrowRight');
    await waitUntil(page, `document.querySelector('#readout').textContent.includes('sense:')`, 30_000);
    // The readout and the frame it was written from, read together (the page is single-threaded).
    const got = (await page.evaluate(`(() => {
      const f = window.floorline.spectrum.frame, k = window.floorline.spectrum.psdFactors();
      return { text: document.querySelector('#readout').textContent, binHz: f.binHz,
               psd: [Array.from(f.values[0], (v) => v * k[0]), Array.from(f.values[1], (v) => v * k[1])] };
    })()`)) as { text: string; binHz: number; psd: [number[], number[]] };
    const text = got.text;
    const probe = /probe: ([0-9.]+) (p|n|µ)A\/√Hz/.exec(text);
    const sense = /sense: ([0-9.]+) (n|µ|m)V\/√Hz/.exec(text);
    expect(probe, text).not.toBeNull();
    expect(sense, text).not.toBeNull();
    const si: Record<string, number> = { p: 1e-12, n: 1e-9, µ: 1e-6, m: 1e-3 };
    const fm = /f = ([0-9.]+) (k?)Hz/.exec(text)!;
    const bin = Math.round((Number(fm[1]) * (fm[2] === 'k' ? 1000 : 1)) / got.binHz);
    // Each printed density is its own channel's value at the cursor's bin, to the 3 digits printed.
    expect(Math.abs((Number(probe![1]) * si[probe![2]]) / Math.sqrt(got.psd[0][bin]) - 1), text).toBeLessThan(5e-3);
    expect(Math.abs((Number(sense![1]) * si[sense![2]]) / Math.sqrt(got.psd[1][bin]) - 1), text).toBeLessThan(5e-3);
    // And the frame is at the levels scipy finds: mean density over bins 1000–1099 within 1 dB of scipy's.
    const ref = JSON.parse(
      python(`import json, numpy as np, scipy.io.wavfile as w, scipy.signal as s
r, x = w.read(${JSON.stringify(WAV)})
f, p = s.welch(x.astype(np.float64), fs=r, window='hann', nperseg=4096, noverlap=2048, detrend='constant', axis=0)
print(json.dumps([float(np.sqrt(np.mean(p[1000:1100, c]))) for c in (0, 1)]))`),
    ) as [number, number];
    for (const c of [0, 1]) {
      const mean = Math.sqrt(got.psd[c].slice(1000, 1100).reduce((a, b) => a + b, 0) / 100);
      expect(Math.abs(20 * Math.log10(mean / ref[c])), `channel ${c}`).toBeLessThan(1);
    }
  }, 120_000);
});
