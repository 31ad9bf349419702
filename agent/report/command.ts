// `floorline report`: one self-contained HTML test-record report of a span of the history store, and on request
// its PDF through headless Chromium's print.
import { spawnSync } from 'node:child_process';
import { existsSync } from 'node:fs';
import { PartWriter } from './part-writer.ts';
import { loadRigConfig } from '../config/rig-config.ts';
import { fileSha256 } from '../store/run-context.ts';
import { dirname, relative, resolve } from 'node:path';
import { buildReport } from './build-report.ts';
import { defineCommand, defineFlags, type ParsedArgs } from '../cli/args.ts';
import { InputError, UsageError } from '../errors.ts';
import { storePathFromArgs } from '../store/cli-flags.ts';
import { SPAN_FLAGS, STORE_SOURCE_FLAGS, readSpan } from '../store/commands/query-flags.ts';

/** Exit status when a limit mask fails (as `analyze --mask`): the report is written all the same. */
export const MASK_FAIL_EXIT = 3;

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

async function runReport(args: ParsedArgs<typeof REPORT_FLAGS>): Promise<number> {
  const f = args.flags;
  const out = f.out;
  if (!out) throw new UsageError('floorline report: -o report.html is required (where to write the report).');
  const span = readSpan(f, 'report');
  // A bad config is refused before anything is read or written (exit 2 naming the JSON path, as `config check`).
  const rig = f.config ? { loaded: loadRigConfig(f.config), sha256: fileSha256(f.config) } : undefined;
  const path = resolve(out);
  // Written part by part as it is rendered; a report that fails midway leaves no partial file behind.
  const file = new PartWriter(path);
  let maskFailed: boolean;
  try {
    ({ maskFailed } = await buildReport(
      storePathFromArgs(f),
      span,
      {
        maskPath: f.mask,
        rig,
        link: (file) => relative(dirname(path), file).split('\\').join('/'),
        generatedAt: new Date().toISOString(),
        progress: true,
      },
      (part) => file.write(part),
    ));
    file.close();
  } catch (err) {
    file.discard();
    throw err;
  }
  process.stdout.write(`report ${path}\n`);
  if (f.pdf) {
    printPdf(path, resolve(f.pdf));
    process.stdout.write(`pdf    ${resolve(f.pdf)}\n`);
  }
  if (f.mask) process.stdout.write(`mask   ${maskFailed ? 'fail' : 'pass'}\n`);
  return maskFailed ? MASK_FAIL_EXIT : 0;
}

const REPORT_FLAGS = defineFlags([
  { name: 'out', short: 'o', kind: 'string', value: 'FILE', help: 'the HTML report to write (required)' },
  { name: 'pdf', kind: 'string', value: 'FILE', help: 'also print it to PDF with headless Chromium' },
  {
    name: 'mask',
    kind: 'string',
    value: 'FILE',
    help: 'limit mask CSV (frequency,limit[,unit]): pass/fail per channel and band, exit 3 on fail',
  },
  {
    name: 'config',
    kind: 'string',
    value: 'FILE',
    help: 'the rig config JSON: the header shows its rig name, channels (unit, calibration, input-referred) and SHA-256',
  },
  ...SPAN_FLAGS,
  ...STORE_SOURCE_FLAGS,
]);

export const reportCommand = defineCommand({
  name: 'report',
  summary: 'a self-contained HTML report (and PDF) of a span of the history store, for a test record',
  details:
    'Example: floorline report --from 2026-12-01T00:00:00Z --to 2026-12-08T00:00:00Z -o week.html --pdf week.pdf',
  positionals: [],
  flags: REPORT_FLAGS,
  run: runReport,
});
