// Images of the report's first two printed pages on the bundled demo, for the README: replays recordings/demo.wav
// into a fresh store, prints `floorline report --pdf` with headless Chromium and rasterises pages 1 and 2 with
// pdftoppm (Debian's poppler-utils). Run: node scripts/report-pages.mjs (after npm run build); writes
// docs/report-page1.png and docs/report-page2.png.
import { execFileSync } from 'node:child_process';
import { mkdtempSync, renameSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';

const root = new URL('..', import.meta.url).pathname;
const dir = mkdtempSync(join(tmpdir(), 'floorline-report-pages-'));
const floorline = (...args) =>
  execFileSync(process.execPath, [join(root, 'bin/floorline.mjs'), ...args], { cwd: dir, stdio: 'inherit' });
floorline(
  'replay',
  join(root, 'recordings/demo.wav'),
  '--speed',
  'max',
  '--no-server',
  '--quiet',
  '--data',
  join(dir, 'data'),
  '--store',
  join(dir, 'demo.sqlite'),
  '--baseline',
  join(root, 'recordings/demo-baseline.json'),
);
floorline('report', '--store', join(dir, 'demo.sqlite'), '-o', 'demo.html', '--pdf', 'demo.pdf');
// 100 dpi: an A4 page is 827 × 1169 px, readable on a screen and small in the repository.
execFileSync('pdftoppm', ['-png', '-r', '100', '-f', '1', '-l', '2', join(dir, 'demo.pdf'), join(dir, 'page')]);
for (const n of [1, 2]) renameSync(join(dir, `page-${n}.png`), join(root, 'docs', `report-page${n}.png`));
process.stdout.write(`docs/report-page1.png, docs/report-page2.png from ${dir}/demo.pdf\n`);
