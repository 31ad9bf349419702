// Bundles scripts/detection/measure.ts with esbuild, runs it and writes DETECTION.md at the repository root.
import { build } from 'esbuild';
import { mkdirSync, writeFileSync } from 'node:fs';
import { spawnSync } from 'node:child_process';

const root = new URL('../..', import.meta.url).pathname;
mkdirSync(`${root}.bench-tmp`, { recursive: true });
const out = `${root}.bench-tmp/detection-measure.mjs`;
await build({
  entryPoints: [`${root}scripts/detection/measure.ts`],
  outfile: out,
  bundle: true,
  platform: 'node',
  format: 'esm',
  target: 'node20',
  packages: 'external',
  logLevel: 'warning',
});
const r = spawnSync(process.execPath, [out], { cwd: root, encoding: 'utf8', maxBuffer: 16 << 20, stdio: ['ignore', 'pipe', 'inherit'] });
if (r.status !== 0) {
  process.stderr.write(`detection measurement failed (exit ${r.status})\n`);
  process.exit(1);
}
writeFileSync(`${root}DETECTION.md`, r.stdout);
process.stdout.write(r.stdout);
