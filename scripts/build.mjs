// Bundles the CLI (Node) and the dashboard (browser) with esbuild into dist/.
import { build } from 'esbuild';
import { cpSync, existsSync, mkdirSync } from 'node:fs';

const root = new URL('..', import.meta.url).pathname;

await build({
  entryPoints: [`${root}agent/cli/main.ts`],
  outfile: `${root}dist/floorline.mjs`,
  bundle: true,
  platform: 'node',
  format: 'esm',
  target: 'node20',
  packages: 'external',
  sourcemap: true,
  logLevel: 'warning',
});

if (existsSync(`${root}dashboard/main.ts`)) {
  mkdirSync(`${root}dist/dashboard`, { recursive: true });
  await build({
    entryPoints: [`${root}dashboard/main.ts`],
    outdir: `${root}dist/dashboard`,
    entryNames: 'app',
    bundle: true,
    platform: 'browser',
    format: 'esm',
    target: 'es2022',
    minify: true,
    sourcemap: true,
    logLevel: 'warning',
  });
  cpSync(`${root}dashboard/index.html`, `${root}dist/dashboard/index.html`);
}
