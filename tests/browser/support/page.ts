// Waiting on the page: page-side expressions are passed as strings (the root tsconfig has no DOM types, on purpose)
// and polled, never slept on, so a loaded machine only makes a test slower.
import type { Page } from 'playwright-core';

/** Polls `expression` in the page until it is truthy; on timeout the error names it, and what `said()` returns. */
export async function waitUntil(page: Page, expression: string, timeoutMs: number, said?: () => string): Promise<void> {
  const end = Date.now() + timeoutMs;
  while (!(await page.evaluate(expression))) {
    if (Date.now() > end)
      throw new Error(`timed out waiting for ${expression}${said ? `\nagent said:\n${said().slice(-2000)}` : ''}`);
    await new Promise((r) => setTimeout(r, 50));
  }
}
