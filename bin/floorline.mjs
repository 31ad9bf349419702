#!/usr/bin/env node
// Entry point: the CLI is bundled by `npm run build` into dist/floorline.mjs.
import { existsSync } from 'node:fs';
const bundle = new URL('../dist/floorline.mjs', import.meta.url);
if (!existsSync(bundle)) {
  process.stderr.write('floorline: dist/floorline.mjs is missing; run `npm run build` first.\n');
  process.exit(2);
}
const { main } = await import(bundle.href);
process.exitCode = await main(process.argv.slice(2));
