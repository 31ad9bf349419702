// The live coherence trace in real headless Chromium against a real `floorline replay` of a two-channel recording
// written by numpy: a 73.1 Hz line common to both channels (one source, the signature of common pickup) over
// independent noise. With mean averaging the live estimate covers the same segments as scipy.signal.coherence on
// the samples up to the trace's snapshot, so the page's trace is checked against scipy on those samples.
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { execFileSync } from 'node:child_process';
import { mkdtempSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import type { BrowserContext, Page } from 'playwright-core';
import { launchChromium, ARTIFACTS } from './support/browser.ts';
import { startAgent, type Agent } from './support/agent.ts';
import { waitUntil as pollPage } from './support/page.ts';

const RATE = 4000;
const SEGMENT = 1024;
const dir = mkdtempSync(join(tmpdir(), 'floorline-coherence-'));
const wav = join(dir, 'common-line.wav');
let browser: BrowserContext;
let agent: Agent;

beforeAll(async () => {
  execFileSync('python3', [
    '-c',
    `import numpy as np, scipy.io.wavfile as w, sys
rng = np.random.default_rng(73)
n = 40 * ${RATE}
t = np.arange(n) / ${RATE}
line = 3e-6 * np.sin(2 * np.pi * 73.1 * t)
x = np.stack([line + 1e-6 * rng.standard_normal(n), 0.5 * line + 1e-6 * rng.standard_normal(n)], axis=1)
w.write(sys.argv[1], ${RATE}, x.astype(np.float32))`,
    wav,
  ]);
  agent = await startAgent([
    'replay',
    wav,
    '--scale',
    '1',
    '--average',
    'mean',
    '--segment',
    String(SEGMENT),
    '--speed',
    '4',
    '--http-port',
    '0',
    '--no-history',
    '--data',
    join(dir, 'data'),
  ]);
  browser = await launchChromium();
}, 60_000);
afterAll(async () => {
  await agent?.stop();
  await browser?.close();
});

const waitUntil = (page: Page, expression: string, timeoutMs: number) =>
  pollPage(page, expression, timeoutMs, () => agent.output());

describe('live coherence trace', () => {
  it('is hidden until asked for, then draws γ² equal to scipy.signal.coherence on the same samples', async () => {
    const page = await browser.newPage();
    await page.goto(agent.url);
    await waitUntil(page, 'window.floorline !== undefined && window.floorline.spectraApplied >= 1', 20_000);
    expect(await page.isHidden('#coherence')).toBe(true);
    await page.check('#show-coherence');
    await waitUntil(
      page,
      `(() => { const c = window.floorline.coherence.latest; return c && c.t > 8 && window.floorline.coherence.plot; })()`,
      30_000,
    );
    expect(await page.isVisible('#coherence')).toBe(true);
    const got: { sample: number; a: string; b: string; gamma: number[]; drawn: number[]; binHz: number } =
      await page.evaluate(`(() => {
        const v = window.floorline.coherence;
        const m = v.latest;
        return { sample: m.sample, a: m.pairs[0].a, b: m.pairs[0].b, gamma: m.pairs[0].coherence,
          drawn: Array.from(v.plot.data[1]), binHz: m.binHz };
      })()`);
    // What is drawn is what came, from bin 1 up (no DC on a log axis).
    expect(got.drawn).toEqual(got.gamma.slice(1));
    expect(got.binHz).toBe(RATE / SEGMENT);
    // scipy.signal.coherence over x[:sample+1] with the replay's settings (Hann, 50 % overlap, mean detrend).
    const ref = JSON.parse(
      execFileSync(
        'python3',
        [
          '-c',
          `import numpy as np, scipy.io.wavfile as w, scipy.signal as s, sys, json
fs, x = w.read(sys.argv[1]); n = int(sys.argv[2]) + 1
f, c = s.coherence(x[:n, 0].astype(np.float64), x[:n, 1].astype(np.float64), fs=fs, window='hann', nperseg=${SEGMENT}, noverlap=${SEGMENT / 2}, detrend='constant')
print(json.dumps(c.tolist()))`,
          wav,
          String(got.sample),
        ],
        { encoding: 'utf8' },
      ),
    ) as number[];
    expect(got.gamma.length).toBe(ref.length);
    let worst = 0;
    for (let k = 1; k < ref.length; k++) worst = Math.max(worst, Math.abs(got.gamma[k] - ref[k]));
    expect(worst).toBeLessThan(1e-5); // the trace carries 6 significant digits
    await page.locator('.coherence-panel').screenshot({ path: join(ARTIFACTS, 'coherence-trace.png') });
    // The common line stands out: γ² near 1 at its bin, chance level away from it.
    const lineBin = Math.round(73.1 / got.binHz);
    expect(Math.max(...got.gamma.slice(lineBin - 1, lineBin + 2))).toBeGreaterThan(0.9);
    const away = got.gamma.slice(200, 400).sort((p, q) => p - q);
    expect(away[away.length >> 1]).toBeLessThan(0.1);
    expect(await page.textContent('#coherence-info')).toMatch(
      new RegExp(`${got.a}–${got.b} from [\\d.]+ equivalent averages`),
    );
    await page.close();
  }, 90_000);
});
