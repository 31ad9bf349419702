// One esbuild configuration for the Node-side scripts (benchmarks, detection run): a single ESM file with the
// npm packages left external, so the bundled script runs from .bench-tmp/ against node_modules.
import { build } from 'esbuild';
import { mkdirSync } from 'node:fs';
import { dirname } from 'node:path';

export async function bundleForNode(entry, outfile) {
  mkdirSync(dirname(outfile), { recursive: true });
  await build({
    entryPoints: [entry],
    outfile,
    bundle: true,
    platform: 'node',
    format: 'esm',
    target: 'node20',
    packages: 'external',
    logLevel: 'warning',
  });
  return outfile;
}
