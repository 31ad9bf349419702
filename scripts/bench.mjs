// Runs every benchmark in scripts/bench/*.ts one after another (bundled by esbuild, then run with node).
// `npm run bench` runs them all; `npm run bench -- welch serial` runs those whose file name contains a word.
import { build } from 'esbuild';
import { readdirSync, mkdirSync } from 'node:fs';
import { spawnSync } from 'node:child_process';

const root = new URL('..', import.meta.url).pathname;
const filters = process.argv.slice(2);
const files = readdirSync(`${root}scripts/bench`)
  .filter((f) => f.endsWith('.ts'))
  .filter((f) => filters.length === 0 || filters.some((w) => f.includes(w)))
  .sort();
mkdirSync(`${root}.bench-tmp`, { recursive: true });
let failed = 0;
for (const f of files) {
  const out = `${root}.bench-tmp/${f.replace(/\.ts$/, '.mjs')}`;
  await build({
    entryPoints: [`${root}scripts/bench/${f}`],
    outfile: out,
    bundle: true,
    platform: 'node',
    format: 'esm',
    target: 'node20',
    packages: 'external',
    logLevel: 'warning',
  });
  process.stdout.write(`\n=== ${f} ===\n`);
  const r = spawnSync(process.execPath, ['--expose-gc', out], { stdio: 'inherit', cwd: root });
  if (r.status !== 0) failed++;
}
if (files.length === 0) process.stdout.write(`no benchmark matches ${filters.join(' ')}\n`);
process.exitCode = failed ? 1 : 0;
