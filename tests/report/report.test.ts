// `floorline report` on the bundled demo replayed into a store: one incident per scripted fault with the settled
// levels `floorline incidents --json` gives, hostile note text escaped, no external resources, byte-identical
// apart from the marked generation time, exit 2 on an empty span, and an A4 PDF whose text holds the incident
// table on its second page (pdftotext and pdfinfo from Debian's poppler-utils).
import { spawnSync } from 'node:child_process';
import { readFileSync } from 'node:fs';
import { join } from 'node:path';
import { beforeAll, describe, expect, it } from 'vitest';
import { root, tempDir } from '../wav/support.ts';
import { cliIn, replayDemoIntoStore } from '../store/support.ts';

let dir: string;
let store: string;
const floorline = cliIn(() => dir);
const HOSTILE = `<script>alert("x")</script> it's "quoted" & <img src=x onerror=alert(1)>`;

beforeAll(() => {
  dir = tempDir('report');
  store = replayDemoIntoStore(dir);
  expect(floorline('note', '--store', store, '--incident', 'mains-bridge-s167999', HOSTILE).status).toBe(0);
}, 120_000);

describe('floorline report', () => {
  it('lists every incident with the settled levels of `floorline incidents`, escapes hostile text and loads nothing from outside', () => {
    const r = floorline('report', '--store', store, '-o', 'a.html');
    expect(r.status, r.stderr).toBe(0);
    const html = readFileSync(join(dir, 'a.html'), 'utf8');
    const { incidents } = JSON.parse(floorline('incidents', '--store', store, '--json').stdout) as {
      incidents: { id: string; settled: { levelDb: number } | null }[];
    };
    expect(incidents.length).toBe(4);
    for (const i of incidents) {
      expect(html).toContain(`<td><a href="#inc-${i.id}">${i.id}</a><br>`);
      expect(html).toContain(`<section class="incident" id="inc-${i.id}">`);
      if (i.settled) expect(html).toContain(`${i.settled.levelDb.toFixed(1)} dB re baseline`);
    }
    // The note is there as text: no live markup from it (HTML escaping, common practice).
    expect(html).not.toMatch(/<script|<img|onerror=alert\(1\)>/i);
    expect(html).toContain('&#60;script&#62;alert(&#34;x&#34;)&#60;/script&#62;');
    // Self-contained: no src/href to another host, no @import, a CSP that forbids fetching anything.
    expect(html).not.toMatch(/(src|href)="(https?:)?\/\//i);
    expect(html).not.toMatch(/@import|url\(/);
    expect(html).toContain(`content="default-src 'none'`);
    expect(html).toContain('<svg');
  });

  it('is byte-identical on a second run apart from the marked generation time', () => {
    expect(floorline('report', '--store', store, '-o', 'b.html').status).toBe(0);
    expect(floorline('report', '--store', store, '-o', 'c.html').status).toBe(0);
    const strip = (f: string) =>
      readFileSync(join(dir, f), 'utf8').replace(/<p class="muted" id="generated">[^<]*<\/p>/, '');
    expect(strip('b.html') === strip('c.html')).toBe(true);
  });

  it('draws a progress bar on a terminal and writes nothing to stderr on a pipe', () => {
    // util-linux `script` (Debian's essential bsdutils) runs the command on a pseudo-terminal.
    const tty = spawnSync(
      'script',
      [
        '-qfec',
        `${process.execPath} ${join(root, 'bin/floorline.mjs')} report --store ${store} -o tty.html`,
        '/dev/null',
      ],
      { cwd: dir, encoding: 'utf8' },
    );
    expect(tty.status, tty.stderr).toBe(0);
    expect(tty.stdout).toMatch(/\rreport \[[#.]+\] +\d+\.\d%/);
    const pipe = floorline('report', '--store', store, '-o', 'pipe.html');
    expect(pipe.status).toBe(0);
    expect(pipe.stderr).toBe('');
  });

  it('exits 2 with a clear message on an empty span and on a folder without a store', () => {
    const empty = floorline('report', '--store', store, '--from', '2030-01-01T00:00:00Z', '-o', 'empty.html');
    expect(empty.status).toBe(2);
    expect(empty.stderr).toMatch(/no trend rows and no incidents in this span; widen --from\/--to/);
    const none = floorline('report', '--data', join(dir, 'nothing-here'), '-o', 'none.html');
    expect(none.status).toBe(2);
    expect(none.stderr).toMatch(/no history store at/);
  });

  it('prints an A4 PDF through headless Chromium with the incident table on page 2 and the safety note last', () => {
    const r = floorline('report', '--store', store, '-o', 'p.html', '--pdf', 'p.pdf');
    expect(r.status, r.stderr).toBe(0);
    const pdf = join(dir, 'p.pdf');
    expect(readFileSync(pdf).subarray(0, 5).toString()).toBe('%PDF-');
    // poppler-utils is installed by scripts/ensure-system-packages.sh: a missing pdfinfo fails here, not skips.
    const info = spawnSync('pdfinfo', [pdf], { encoding: 'utf8' });
    expect(info.error, 'pdfinfo (Debian poppler-utils) is needed').toBeUndefined();
    const pages = Number(/^Pages:\s+(\d+)/m.exec(info.stdout)?.[1]);
    // ISO 216 A4 is 210 × 297 mm = 595.28 × 841.89 pt; Chromium rounds to whole CSS px (1/96 in).
    const size = /^Page size:\s+([\d.]+) x ([\d.]+) pts/m.exec(info.stdout)!;
    expect(Math.abs(Number(size[1]) - 595.28)).toBeLessThan(1);
    expect(Math.abs(Number(size[2]) - 841.89)).toBeLessThan(1);
    const page = (n: number) =>
      spawnSync('pdftotext', ['-f', String(n), '-l', String(n), pdf, '-'], { encoding: 'utf8' }).stdout;
    // Page 1: header and summary; page 2 starts the incidents (a forced break), its table lists every incident.
    expect(page(1)).toMatch(/1\. Rig and settings[\s\S]*2\. Summary/);
    const second = page(2);
    expect(second.trimStart().startsWith('3. Incidents')).toBe(true);
    const { incidents } = JSON.parse(floorline('incidents', '--store', store, '--json').stdout) as {
      incidents: { id: string; settled: { levelDb: number } | null }[];
    };
    expect(incidents.length).toBe(4);
    // Table cells wrap: an id may break after a hyphen (which pdftotext then drops as a hyphenation), a level between its words.
    for (const i of incidents) expect(second).toMatch(new RegExp(i.id.replace(/-/g, '-?\\s*')));
    for (const i of incidents)
      if (i.settled) expect(second).toMatch(new RegExp(`${i.settled.levelDb.toFixed(1)}\\s+dB\\s+re`));
    // The trends start a page of their own, and the document ends with the safety note on its last page.
    const withTrends = Array.from({ length: pages }, (_, n) => n + 1).filter((n) =>
      page(n).trimStart().startsWith('4. Trends'),
    );
    expect(withTrends.length).toBe(1);
    expect(page(pages)).toContain('Safety');
    expect(pages).toBeGreaterThanOrEqual(withTrends[0] + 1);
    expect(pages).toBeLessThanOrEqual(8);
  }, 60_000);
});
