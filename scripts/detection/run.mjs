// Bundles scripts/detection/measure.ts with esbuild, runs it and writes DETECTION.md at the repository root.
import { writeFileSync } from 'node:fs';
import { bundleForNode } from '../bundle-node.mjs';
import { spawnSync } from 'node:child_process';

const root = new URL('../..', import.meta.url).pathname;
const out = await bundleForNode(`${root}scripts/detection/measure.ts`, `${root}.bench-tmp/detection-measure.mjs`);
const r = spawnSync(process.execPath, [out], {
  cwd: root,
  encoding: 'utf8',
  maxBuffer: 16 << 20,
  stdio: ['ignore', 'pipe', 'inherit'],
});
if (r.status !== 0) {
  process.stderr.write(`detection measurement failed (exit ${r.status})\n`);
  process.exit(1);
}
writeFileSync(`${root}DETECTION.md`, r.stdout);
process.stdout.write(r.stdout);
