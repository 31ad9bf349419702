// Screenshots of the dashboard on the bundled demo, for the README: each view at 1280×800 and 1920×1080 in
// Debian's headless Chromium. Run: node scripts/screenshots.mjs (after npm run build); writes docs/screenshots/.
import { spawn } from 'node:child_process';
import { mkdtempSync, mkdirSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { chromium } from 'playwright-core';

const root = new URL('..', import.meta.url).pathname;
const out = join(root, 'docs', 'screenshots');
mkdirSync(out, { recursive: true });
const data = mkdtempSync(join(tmpdir(), 'floorline-shots-'));
const agent = spawn(
  process.execPath,
  ['bin/floorline.mjs', 'demo', '--speed', '3', '--http-port', '0', '--data', data],
  { cwd: root, stdio: ['ignore', 'pipe', 'inherit'] },
);
const url = await new Promise((resolve, reject) => {
  let text = '';
  agent.stdout.on('data', (d) => {
    text += d;
    const m = /dashboard\s+(http:\/\/\S+)/.exec(text);
    if (m) resolve(m[1]);
  });
  agent.on('exit', () => reject(new Error(`demo exited:\n${text}`)));
});
const browser = await chromium.launch({
  executablePath: '/usr/bin/chromium',
  args: [
    '--headless',
    '--no-sandbox',
    '--disable-gpu',
    '--disable-quic',
    '--no-first-run',
    '--disable-background-networking',
    '--disable-component-update',
    '--disable-sync',
  ],
});
try {
  const sizes = [
    [1280, 800],
    [1920, 1080],
  ];
  const pages = [];
  for (const [w, h] of sizes) {
    const p = await browser.newPage({ viewport: { width: w, height: h } });
    await p.goto(url);
    pages.push([p, `${w}x${h}`]);
  }
  // Into the first loop's mains fault and band rise (sample time), so every panel has something to show.
  const statusT = async () => (await (await fetch(`${url.replace(/\/?(\?.*)?$/, '/')}api/status`)).json()).t;
  for (let i = 0; i < 240 && (await statusT()) < 44; i++) await new Promise((r) => setTimeout(r, 250));
  for (const [p, tag] of pages) {
    // A fresh load, as after a reload: the waterfall fills from the store's kept spectra at once.
    await p.reload();
    await p
      .waitForFunction('window.floorline && window.floorline.waterfall.prefilledRows > 0', null, { timeout: 20_000 })
      .catch(() => {});
    await p.waitForTimeout(1500);
    await p.screenshot({ path: join(out, `spectrum-${tag}.png`) });
    await p.locator('.waterfall-panel').scrollIntoViewIfNeeded();
    await p.screenshot({ path: join(out, `history-${tag}.png`) });
    // The spectrum at the mains incident's peak against the baseline, as a click on it in the timeline shows it.
    await p.evaluate(`(() => {
      const f = window.floorline;
      const i = f.incidents.incidents.find((x) => x.rules.includes('mains')) ?? null;
      return f.showMoment(Date.parse(f.status.wallTime) / 1000 - 20, i);
    })()`);
    await p.waitForTimeout(500);
    await p.locator('.timeline-panel').scrollIntoViewIfNeeded();
    await p.screenshot({ path: join(out, `timeline-incidents-${tag}.png`) });
    await p.evaluate('window.scrollTo(0, 0)');
    await p.selectOption('#spectrum-mode', 'logf');
    await p.waitForTimeout(3000);
    await p.screenshot({ path: join(out, `log-frequency-${tag}.png`) });
    await p.selectOption('#spectrum-mode', 'welch');
  }
} finally {
  await browser.close();
  agent.kill('SIGTERM');
}
console.log(`screenshots in ${out}`);
