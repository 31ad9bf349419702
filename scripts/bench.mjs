// Runs every benchmark in scripts/bench/*.ts one after another (bundled by esbuild, then run with node).
// `npm run bench` runs them all; `npm run bench -- welch serial` runs those whose file name contains a word.
import { readdirSync } from 'node:fs';
import { bundleForNode } from './bundle-node.mjs';
import { spawnSync } from 'node:child_process';

const root = new URL('..', import.meta.url).pathname;
const filters = process.argv.slice(2);
const files = readdirSync(`${root}scripts/bench`)
  .filter((f) => f.endsWith('.ts'))
  .filter((f) => filters.length === 0 || filters.some((w) => f.includes(w)))
  .sort();
let failed = 0;
for (const f of files) {
  const out = await bundleForNode(`${root}scripts/bench/${f}`, `${root}.bench-tmp/${f.replace(/\.ts$/, '.mjs')}`);
  process.stdout.write(`\n=== ${f} ===\n`);
  const r = spawnSync(process.execPath, ['--expose-gc', out], { stdio: 'inherit', cwd: root });
  if (r.status !== 0) failed++;
}
if (files.length === 0) process.stdout.write(`no benchmark matches ${filters.join(' ')}\n`);
process.exitCode = failed ? 1 : 0;
