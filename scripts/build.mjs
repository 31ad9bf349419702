// Bundles the CLI (Node) and the dashboard (browser) with esbuild into dist/.
import { build } from 'esbuild';
import { execFileSync } from 'node:child_process';
import { cpSync, existsSync, mkdirSync } from 'node:fs';

const root = new URL('..', import.meta.url).pathname;

// The commit the bundle comes from, for reports and --version ("unknown" outside a git checkout).
function gitCommit() {
  try {
    const git = (...args) =>
      execFileSync('git', ['-C', root, ...args], { encoding: 'utf8', stdio: ['ignore', 'pipe', 'ignore'] });
    const head = git('rev-parse', 'HEAD').trim();
    return git('status', '--porcelain', '--untracked-files=no').trim() ? `${head}-dirty` : head;
  } catch {
    return 'unknown';
  }
}

// The CLI and the worker threads' own small bundles, side by side in dist/ (agent/workers/worker-script.ts finds
// them there).
const node = {
  bundle: true,
  platform: 'node',
  format: 'esm',
  target: 'node20',
  // Pure-JS packages are bundled: loading @stdlib's hundreds of small modules and ajv one file at a time cost
  // ~0.4 s at every start. Native addons (better-sqlite3, serialport) and ws's optional addons stay external.
  external: ['better-sqlite3', 'serialport', '@serialport/*', 'ws', 'bufferutil', 'utf-8-validate'],
  sourcemap: true,
  logLevel: 'warning',
  // Bundled CommonJS packages require Node's built-ins (tty, util) through this.
  banner: {
    js: "import { createRequire as __floorlineRequire } from 'node:module'; const require = __floorlineRequire(import.meta.url);",
  },
  define: { FLOORLINE_COMMIT: JSON.stringify(gitCommit()) },
};
await build({ ...node, entryPoints: [`${root}agent/cli/main.ts`], outfile: `${root}dist/floorline.mjs` });
// The dashboard's report endpoint builds reports on a worker thread (agent/report/report-api.ts).
await build({
  ...node,
  entryPoints: [`${root}agent/report/report-worker.ts`],
  outfile: `${root}dist/report-worker.mjs`,
});
await build({
  ...node,
  entryPoints: [
    `${root}agent/workers/channel-worker.ts`,
    `${root}agent/workers/span-worker.ts`,
    `${root}agent/workers/lowfreq-worker.ts`,
    `${root}agent/workers/analysis-worker.ts`,
  ],
  outdir: `${root}dist`,
  outExtension: { '.js': '.mjs' },
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
