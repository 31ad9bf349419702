// What each folder may import (DEVELOPERS.md "Layout"): dsp/ nothing outside dsp/, protocol/ only dsp/, the
// dashboard only protocol/, dsp/ and its npm packages, and nothing in agent/server/ reaches into the dsp code.
import { describe, expect, it } from 'vitest';
import { readdirSync, readFileSync, statSync } from 'node:fs';
import { dirname, join, relative, resolve } from 'node:path';

const root = resolve(new URL('../../', import.meta.url).pathname);

function sources(dir: string): string[] {
  const out: string[] = [];
  for (const name of readdirSync(join(root, dir))) {
    const rel = join(dir, name);
    if (statSync(join(root, rel)).isDirectory()) out.push(...sources(rel));
    else if (name.endsWith('.ts')) out.push(rel);
  }
  return out;
}

/** Every import specifier of a file: the relative ones resolved to repository paths, the others as written. */
export function importsOf(file: string): string[] {
  const text = readFileSync(join(root, file), 'utf8');
  const specs = [
    ...text.matchAll(
      /(?:^|\n)\s*(?:import|export)\s[^'"]*?from\s*['"]([^'"]+)['"]|(?:^|\n)\s*import\s*['"]([^'"]+)['"]|import\(\s*['"]([^'"]+)['"]\s*\)/g,
    ),
  ].map((m) => m[1] ?? m[2] ?? m[3]);
  return specs.map((s) => (s.startsWith('.') ? relative(root, resolve(root, dirname(file), s)) : s));
}

function offenders(dir: string, allowed: (target: string) => boolean): string[] {
  return sources(dir).flatMap((f) =>
    importsOf(f)
      .filter((t) => !allowed(t))
      .map((t) => `${f} → ${t}`),
  );
}

const inside =
  (...folders: string[]) =>
  (t: string) =>
    folders.some((d) => t.startsWith(d + '/'));

describe('folder boundaries', () => {
  it('dsp/ imports only dsp/ (and the numeric packages it wraps)', () => {
    expect(
      offenders(
        'dsp',
        (t) =>
          inside('dsp')(t) ||
          ['fft.js', '@stdlib/stats-base-dists-chisquare-quantile', '@stdlib/stats-base-dists-f-quantile'].includes(t),
      ),
    ).toEqual([]);
  });

  it('protocol/ imports only protocol/ and dsp/', () => {
    expect(offenders('protocol', inside('protocol', 'dsp'))).toEqual([]);
  });

  it('dashboard/ imports only dashboard/, protocol/, dsp/ and its chart package', () => {
    expect(
      offenders(
        'dashboard',
        (t) => inside('dashboard', 'protocol', 'dsp')(t) || t === 'uplot' || t.startsWith('uplot/'),
      ),
    ).toEqual([]);
  });

  it('agent/server/ does no dsp of its own: it reads the monitor and the protocol', () => {
    expect(offenders('agent/server', (t) => !inside('dsp')(t))).toEqual([]);
  });

  it('finds the imports it checks (a reader that found none would pass everything)', () => {
    expect(importsOf('dsp/welch.ts')).toContain('dsp/averaging.ts');
    expect(importsOf('dashboard/app.ts')).toContain('protocol/messages.ts');
    expect(sources('dsp').length).toBeGreaterThan(20);
  });
});
