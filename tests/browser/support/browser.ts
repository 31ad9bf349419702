// Real headless Chromium (Debian's /usr/bin/chromium) through playwright-core, with a fresh profile each launch.
import { chromium, type BrowserContext } from 'playwright-core';
import { mkdtempSync, mkdirSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';

export const CHROMIUM = '/usr/bin/chromium';
export const ARTIFACTS = new URL('../../../test-artifacts/', import.meta.url).pathname;

/** A fresh profile folder each time (playwright passes it to Chromium as --user-data-dir). */
export async function launchChromium(viewport = { width: 1440, height: 1000 }): Promise<BrowserContext> {
  const profile = mkdtempSync(join(tmpdir(), 'floorline-chromium-'));
  mkdirSync(ARTIFACTS, { recursive: true });
  return chromium.launchPersistentContext(profile, {
    executablePath: CHROMIUM,
    headless: true,
    viewport,
    acceptDownloads: true,
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
}
