// Every repository path a document names must exist, so a reader following the docs never hits a dead end.
// Scans the project's Markdown files for paths under the top-level folders (in backticks, links or prose) and
// for Markdown link targets relative to the document.
import { describe, expect, it } from 'vitest';
import { existsSync, readdirSync, readFileSync, statSync } from 'node:fs';
import { dirname, join, relative, resolve } from 'node:path';

const root = resolve(import.meta.dirname, '../..');
const skipDirs = new Set(['node_modules', 'dist', '.git', 'floorline-data']);
const topFolders = [
  'agent',
  'dsp',
  'dashboard',
  'protocol',
  'tests',
  'scripts',
  'recordings',
  'docs',
  'types',
  'bin',
  '.ci',
];
const pathInText = new RegExp(
  `(?<![\\w./@-])((?:${topFolders.map((f) => f.replace('.', '\\.')).join('|')})/[\\w./*…-]*)`,
  'g',
);
const linkTarget = /\]\(([^)\s#]+)(?:#[^)]*)?\)/g;

function markdownFiles(dir: string): string[] {
  const out: string[] = [];
  for (const name of readdirSync(dir)) {
    if (skipDirs.has(name)) continue;
    const full = join(dir, name);
    if (statSync(full).isDirectory()) out.push(...markdownFiles(full));
    else if (name.endsWith('.md')) out.push(full);
  }
  return out;
}

// A token is a concrete path only if it names no placeholder: no glob, no ellipsis, no UPPERCASE part such as
// PREFIX or NAME (those describe files the program makes, not files in the repository).
function isConcrete(path: string): boolean {
  return (
    !/[*…]/.test(path) &&
    !path.split('/').some((part) => /^[A-Z][A-Z_-]*[A-Z](\.|$)/.test(part) || /[A-Z]{3,}-/.test(part))
  );
}

export function missingPaths(): string[] {
  const missing: string[] = [];
  for (const file of markdownFiles(root)) {
    const text = readFileSync(file, 'utf8');
    const where = relative(root, file);
    for (const m of text.matchAll(pathInText)) {
      const path = m[1].replace(/[.,;:]+$/, '');
      if (isConcrete(path) && !existsSync(join(root, path))) missing.push(`${where}: ${path}`);
    }
    for (const m of text.matchAll(linkTarget)) {
      const target = m[1];
      if (/^[a-z]+:/.test(target)) continue; // http:, mailto: …
      if (!existsSync(resolve(dirname(file), target))) missing.push(`${where}: link ${target}`);
    }
  }
  return missing;
}

describe('paths named in the docs', () => {
  it('finds the documents to scan', () => {
    const names = markdownFiles(root).map((f) => relative(root, f));
    expect(names).toEqual(
      expect.arrayContaining(['README.md', 'DEVELOPERS.md', 'docs/ARCHITECTURE.md', 'docs/TOOLCHAIN.md']),
    );
  });

  it('every repository path named in a Markdown file exists', () => {
    expect(missingPaths()).toEqual([]);
  });
});
