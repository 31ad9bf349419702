// Where a worker's bundled script lives (`npm run build` writes the worker bundles into dist/).
import { existsSync } from 'node:fs';

export function workerScript(name: string): URL {
  // Beside the bundle (dist/), from source (agent/workers/ → dist/), from a benchmark bundle (.bench-tmp/ → dist/).
  for (const at of [`./${name}`, `../../dist/${name}`, `../dist/${name}`]) {
    const url = new URL(at, import.meta.url);
    if (existsSync(url)) return url;
  }
  throw new Error(`worker script ${name} is missing beside ${import.meta.url}; run \`npm run build\` first.`);
}
