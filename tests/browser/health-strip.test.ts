// The health strip shows the counters a faulty board drives, in real headless Chromium against a live
// `floorline run --format text` over a real pty pair (socat). Written to the board end: good lines, three bad ones
// (a wrong field count, a word, an empty field) and lines with 1e999, a well-formed number that overflows a double
// to +Inf (IEEE 754). The strip must show the same counts as /api/status, marked as faults.
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { closeSync, mkdtempSync, openSync, writeSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import type { BrowserContext } from 'playwright-core';
import { launchChromium } from './support/browser.ts';
import { startAgent, type Agent } from './support/agent.ts';
import { PtyPair } from '../serial/pty-pair.ts';
import type { AgentStatus } from '../../protocol/messages.ts';

const root = new URL('../../', import.meta.url).pathname;
const dir = mkdtempSync(join(tmpdir(), 'floorline-health-strip-'));
let browser: BrowserContext;
let pair: PtyPair;
let agent: Agent;
let url = '';

beforeAll(async () => {
  pair = new PtyPair(join(dir, 'board'), join(dir, 'host'));
  await pair.start();
  agent = await startAgent([
    'run',
    '--port',
    pair.host,
    '--format',
    'text',
    '--rate',
    '1000',
    '--http-port',
    '0',
    '--no-history',
    '--data',
    join(dir, 'data'),
  ]);
  url = agent.url;
  browser = await launchChromium();
}, 60_000);
afterAll(async () => {
  await agent?.stop();
  await pair?.kill();
  await browser?.close();
});

const status = async (): Promise<AgentStatus> => (await (await fetch(`${url}api/status`)).json()) as AgentStatus;

describe('health strip', () => {
  it('shows link errors and non-finite frames from a faulty board, as /api/status counts them', async () => {
    const page = await browser.newPage();
    await page.goto(url);
    await page.waitForSelector('#health-sync');
    // Two seconds of good samples, the faults, then more good samples (enough for spectra and the status tick).
    const good = (n: number) =>
      Array.from({ length: n }, (_, i) => `${Math.sin(i) * 1e-3},${Math.cos(i) * 1e-3}\n`).join('');
    const board = openSync(pair.board, 'w');
    writeSync(board, 'a,b\n' + good(2000) + '3,4,5\nx,1\n,\n1e999,0\n0,1e999\n' + good(3000));
    closeSync(board);
    let s = await status();
    for (let i = 0; i < 100 && !(s.syncErrors >= 3 && (s.nonfiniteFrames ?? 0) >= 2 && s.samples >= 5000); i++) {
      await new Promise((r) => setTimeout(r, 200));
      s = await status();
    }
    expect(s.syncErrors).toBe(3);
    expect(s.nonfiniteFrames).toBe(2);
    // The page shows the same numbers and marks them as faults; a counter at zero is not marked.
    const item = (id: string) =>
      page.evaluate(
        `(() => { const li = document.getElementById('health-${id}'); return [li.textContent, li.classList.contains('bad')]; })()`,
      ) as Promise<[string, boolean]>;
    await expect.poll(() => item('sync'), { timeout: 10_000 }).toEqual(['link errors3', true]);
    await expect.poll(() => item('nonfinite'), { timeout: 10_000 }).toEqual(['non-finite2', true]);
    expect(await item('crc')).toEqual(['CRC errors0', false]);
    await page.close();
  }, 60_000);
});
