// `floorline report` on the bundled demo replayed into a store: one incident per scripted fault with the settled
// levels `floorline incidents --json` gives, hostile note text escaped, no external resources, byte-identical
// apart from the marked generation time, exit 2 on an empty span, and a PDF whose text holds the incident table
// (pdftotext from poppler-utils, when installed).
import { spawnSync } from 'node:child_process';
import { readFileSync } from 'node:fs';
import { join } from 'node:path';
import { beforeAll, describe, expect, it } from 'vitest';
import { tempDir } from '../wav/support.ts';
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
      expect(html).toContain(`<td>${i.id}<br>`);
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

  it('exits 2 with a clear message on an empty span and on a folder without a store', () => {
    const empty = floorline('report', '--store', store, '--from', '2030-01-01T00:00:00Z', '-o', 'empty.html');
    expect(empty.status).toBe(2);
    expect(empty.stderr).toMatch(/no trend rows and no incidents in this span; widen --from\/--to/);
    const none = floorline('report', '--data', join(dir, 'nothing-here'), '-o', 'none.html');
    expect(none.status).toBe(2);
    expect(none.stderr).toMatch(/no history store at/);
  });

  it('prints a PDF through headless Chromium whose text holds the incident table', () => {
    const r = floorline('report', '--store', store, '-o', 'p.html', '--pdf', 'p.pdf');
    expect(r.status, r.stderr).toBe(0);
    expect(readFileSync(join(dir, 'p.pdf')).subarray(0, 5).toString()).toBe('%PDF-');
    const text = spawnSync('pdftotext', [join(dir, 'p.pdf'), '-'], { encoding: 'utf8' });
    if (text.error) return; // poppler-utils not installed: the PDF header check above stands
    expect(text.stdout).toContain('Incidents');
    expect(text.stdout).toMatch(/band-rise/);
  }, 60_000);
});
