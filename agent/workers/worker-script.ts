// Where a worker's bundled script lives: beside the running bundle (dist/), or in dist/ when running from source
// (tests import the TypeScript directly; `npm run build` writes the worker bundles).
import { existsSync } from 'node:fs';

export function workerScript(name: string): URL {
  const beside = new URL(`./${name}`, import.meta.url);
  if (existsSync(beside)) return beside;
  const built = new URL(`../../dist/${name}`, import.meta.url);
  if (existsSync(built)) return built;
  throw new Error(`worker script ${name} is missing beside ${import.meta.url}; run \`npm run build\` first.`);
}
