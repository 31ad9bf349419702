// The folder rules of docs/ARCHITECTURE.md ("Folders and what each may import"), checked on the source: every
// import (type-only included) of every .ts file, resolved to the folder it lands in.
import { describe, expect, it } from 'vitest';
import { builtinModules } from 'node:module';
import { readdirSync, readFileSync, statSync } from 'node:fs';
import { dirname, join, relative, resolve } from 'node:path';

const root = resolve(import.meta.dirname, '../..');
const importSpec =
  /(?:^|[;\s])(?:import|export)\s(?:[^'";]*?\sfrom\s*)?['"]([^'"]+)['"]|import\(\s*['"]([^'"]+)['"]\s*\)/g;
const nodeModules = new Set(builtinModules);

function tsFiles(dir: string): string[] {
  const out: string[] = [];
  for (const name of readdirSync(dir)) {
    const full = join(dir, name);
    if (statSync(full).isDirectory()) out.push(...tsFiles(full));
    else if (name.endsWith('.ts')) out.push(full);
  }
  return out;
}

interface Import {
  file: string;
  spec: string;
  target: string | null;
}

/** Every import under `folder`: `target` is the repository path it resolves to, null for a package. */
function importsOf(folder: string): Import[] {
  const out: Import[] = [];
  for (const file of tsFiles(join(root, folder))) {
    const text = readFileSync(file, 'utf8').replace(/\/\*[\s\S]*?\*\/|\/\/[^\n]*/g, '');
    for (const m of text.matchAll(importSpec)) {
      const spec = m[1] ?? m[2];
      const target = spec.startsWith('.') ? relative(root, resolve(dirname(file), spec)) : null;
      out.push({ file: relative(root, file), spec, target });
    }
  }
  return out;
}

/** Imports under `folder` that leave the allowed folders, or that name a Node module. */
function violations(folder: string, allowed: string[]): string[] {
  return importsOf(folder)
    .filter(({ spec, target }) =>
      target === null
        ? spec.startsWith('node:') || nodeModules.has(spec.split('/')[0])
        : !allowed.some((a) => target.startsWith(`${a}/`)),
    )
    .map(({ file, spec }) => `${file} imports ${spec}`);
}

describe('import boundaries', () => {
  it('sees the imports it checks (the scan is not empty)', () => {
    const dsp = importsOf('dsp');
    expect(dsp.some((i) => i.target === 'dsp/windows.ts')).toBe(true);
    expect(importsOf('dashboard').some((i) => i.target?.startsWith('protocol/'))).toBe(true);
  });

  it('dsp/ imports nothing outside dsp/ and no Node module', () => {
    expect(violations('dsp', ['dsp'])).toEqual([]);
  });

  it('protocol/ (types shared by agent and dashboard) imports only protocol/ and dsp/, no Node module', () => {
    expect(violations('protocol', ['protocol', 'dsp'])).toEqual([]);
  });

  it('dashboard/ imports only dashboard/, dsp/ and protocol/, no Node module', () => {
    expect(violations('dashboard', ['dashboard', 'dsp', 'protocol'])).toEqual([]);
  });
});
