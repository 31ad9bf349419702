// `floorline report`: one self-contained HTML test-record report of a span of the history store, and on request
// its PDF through headless Chromium's print.
import { spawnSync } from 'node:child_process';
import { existsSync, writeFileSync } from 'node:fs';
import { resolve } from 'node:path';
import type { CommandSpec, ParsedArgs } from '../cli/args.ts';
import { InputError, UsageError } from '../errors.ts';
import { storePathFromArgs } from '../store/cli-flags.ts';
import { openStoreForReading } from '../store/open-store.ts';
import { SPAN_FLAGS, STORE_SOURCE_FLAGS, readSpan } from '../store/commands/query-flags.ts';
import { collectReport } from './collect.ts';
import { renderReport } from './render.ts';
import { AGENT_VERSION } from '../server/server.ts';

const CHROMIUM = ['/usr/bin/chromium', '/usr/bin/chromium-browser', '/usr/bin/google-chrome'];

function printPdf(html: string, pdf: string): void {
  const browser = CHROMIUM.find((p) => existsSync(p));
  if (!browser)
    throw new InputError(
      'floorline report: --pdf needs Chromium to print the HTML; install it (Debian: apt-get install chromium). The HTML report was written.',
    );
  const r = spawnSync(
    browser,
    [
      '--headless',
      '--no-sandbox',
      '--disable-gpu',
      '--no-first-run',
      '--disable-background-networking',
      '--disable-component-update',
      '--disable-sync',
      '--no-pdf-header-footer',
      `--print-to-pdf=${pdf}`,
      `file://${html}`,
    ],
    { encoding: 'utf8', timeout: 60_000 },
  );
  if (r.status !== 0 || !existsSync(pdf))
    throw new InputError(
      `floorline report: Chromium could not print ${pdf}: ${(r.stderr || r.error?.message || '').trim().slice(0, 300)}`,
    );
}

async function runReport(args: ParsedArgs): Promise<number> {
  const f = args.flags;
  const out = f.out as string | undefined;
  if (!out) throw new UsageError('floorline report: -o report.html is required (where to write the report).');
  if (f.mask)
    throw new UsageError(
      'floorline report: --mask is not supported yet; leave it out (the report then has no pass/fail column).',
    );
  const span = readSpan(args, 'report');
  const db = openStoreForReading(storePathFromArgs(args));
  let html: string;
  try {
    html = renderReport(collectReport(db, span.from, span.to), new Date().toISOString(), AGENT_VERSION);
  } finally {
    db.close();
  }
  const path = resolve(out);
  writeFileSync(path, html);
  process.stdout.write(`report ${path}\n`);
  if (f.pdf) {
    printPdf(path, resolve(f.pdf as string));
    process.stdout.write(`pdf    ${resolve(f.pdf as string)}\n`);
  }
  return 0;
}

export const reportCommand: CommandSpec = {
  name: 'report',
  summary: 'a self-contained HTML report (and PDF) of a span of the history store, for a test record',
  details:
    'Example: floorline report --from 2026-12-01T00:00:00Z --to 2026-12-08T00:00:00Z -o week.html --pdf week.pdf',
  positionals: [],
  flags: [
    { name: 'out', short: 'o', kind: 'string', value: 'FILE', help: 'the HTML report to write (required)' },
    { name: 'pdf', kind: 'string', value: 'FILE', help: 'also print it to PDF with headless Chromium' },
    { name: 'mask', kind: 'string', value: 'FILE', help: 'limit mask CSV (not supported yet)' },
    ...SPAN_FLAGS,
    ...STORE_SOURCE_FLAGS,
  ],
  run: runReport,
};
