// The report's header names what the span was measured with: the build's commit (git rev-parse HEAD), the
// baseline file and the rig config with their SHA-256 (python's hashlib on the same files), the channels'
// calibration from the config (the run's record, or with `report --config` the given file: rig name, channels,
// SHA-256, a bad file refused with exit 2 as `config check` refuses it), and the analysis settings with the Hann
// window's ENBW of 1.5 bins (Heinzel, Rüdiger & Schilling 2002, table of window properties).
import { execFileSync } from 'node:child_process';
import { existsSync, readFileSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { Python, root, tempDir } from '../wav/support.ts';
import { cliIn } from '../store/support.ts';

let dir: string;
let py: Python;
let html: string;
const floorline = cliIn(() => dir);
const baseline = join(root, 'recordings/demo-baseline.json');

beforeAll(() => {
  dir = tempDir('report-header');
  py = new Python();
  writeFileSync(
    join(dir, 'rig.json'),
    JSON.stringify({
      channels: [
        { name: 'bridge', unit: 'V', gain: 100, inputReferred: true },
        { name: 'shorted', unit: 'V' },
      ],
    }),
  );
  const args = ['--speed', 'max', '--no-server', '--quiet', '--data', 'data', '--store', 's.sqlite'];
  const r = floorline(
    'replay',
    join(root, 'recordings/demo.wav'),
    '--config',
    'rig.json',
    '--baseline',
    baseline,
    ...args,
  );
  expect(r.status, r.stderr).toBe(0);
  expect(floorline('report', '--store', 's.sqlite', '-o', 'h.html').status).toBe(0);
  html = readFileSync(join(dir, 'h.html'), 'utf8');
}, 120_000);

afterAll(() => py?.close());

describe('report header', () => {
  it('names the commit the build came from', () => {
    const git = (...a: string[]) => execFileSync('git', ['-C', root, ...a], { encoding: 'utf8' }).trim();
    const dirty = git('status', '--porcelain', '--untracked-files=no') !== '';
    // The bundle under test was built from this tree by the suite's global setup.
    expect(html).toMatch(new RegExp(`commit ${git('rev-parse', 'HEAD')}${dirty ? '(-dirty)?' : ''}</td>`));
  });

  it('gives the baseline and config files with their SHA-256', async () => {
    const sha = (f: string) =>
      py.run<string>(`import hashlib\nresult = hashlib.sha256(open(args[0], 'rb').read()).hexdigest()`, f);
    expect(html).toContain(`${baseline}<br>SHA-256 ${await sha(baseline)}; settings hash `);
    expect(html).toContain(`${join(dir, 'rig.json')}<br>SHA-256 ${await sha(join(dir, 'rig.json'))}`);
    // The baseline's own capture span and notes, as the file holds them.
    const b = JSON.parse(readFileSync(baseline, 'utf8'));
    expect(html).toContain(`captured samples ${b.span.firstSample}–${b.span.lastSample}`);
    expect(html).toContain(`settings hash ${b.settingsHash}`);
  });

  it('lists the channels with their calibration and the analysis settings', () => {
    expect(html).toContain('bridge in V, gain 100, input-referred; shorted in V, at the ADC');
    expect(html).toMatch(/window hann, ENBW 1\.500 bins = RBW 2\.93 Hz; bin 1\.95 Hz; segment 4096 samples/);
    expect(html).toContain('averaging exponential, τ = 10 s');
  });

  it('with --config shows the rig name, the config channels with calibration and the file SHA-256', async () => {
    const sha = (f: string) =>
      py.run<string>(`import hashlib\nresult = hashlib.sha256(open(args[0], 'rb').read()).hexdigest()`, f);
    // The run's own config: the header says the run used it.
    const same = floorline('report', '--store', 's.sqlite', '--config', 'rig.json', '-o', 'same.html');
    expect(same.status, same.stderr).toBe(0);
    const a = readFileSync(join(dir, 'same.html'), 'utf8');
    expect(a).toContain('bridge in V, gain 100, input-referred; shorted in V, at the ADC (from the rig config)');
    expect(a).toContain(
      `${join(dir, 'rig.json')}<br>SHA-256 ${await sha(join(dir, 'rig.json'))}<br>the run used this file`,
    );
    // Another file: its name (escaped) and calibration, and the config the run recorded beside it.
    writeFileSync(
      join(dir, 'stand.json'),
      JSON.stringify({
        name: 'Stand <2> "north"',
        channels: [
          { name: 'bridge', unit: 'V', voltsPerCount: 2.98e-7, gain: 100, inputReferred: true },
          { name: 'shorted', unit: 'V', voltsPerCount: 2.98e-7 },
        ],
      }),
    );
    const other = floorline('report', '--store', 's.sqlite', '--config', 'stand.json', '-o', 'other.html');
    expect(other.status, other.stderr).toBe(0);
    const b = readFileSync(join(dir, 'other.html'), 'utf8');
    expect(b).toContain(
      `<th>rig</th><td>Stand &#60;2&#62; &#34;north&#34; (rig config ${join(dir, 'stand.json')})</td>`,
    );
    expect(b).toContain('bridge in V, 298 nV/count, gain 100, input-referred; shorted in V, 298 nV/count, at the ADC');
    expect(b).toContain(
      `${join(dir, 'stand.json')}<br>SHA-256 ${await sha(join(dir, 'stand.json'))}<br>the run recorded: ${join(dir, 'rig.json')}`,
    );
  });

  it('refuses a bad --config with exit 2 naming the JSON path, as config check does, and writes nothing', () => {
    writeFileSync(
      join(dir, 'bad.json'),
      JSON.stringify({
        channels: [
          { name: 'a', unit: 'V' },
          { name: 'b', unit: 'V', gain: -1 },
        ],
      }),
    );
    const check = floorline('config', 'check', 'bad.json');
    const r = floorline('report', '--store', 's.sqlite', '--config', 'bad.json', '-o', 'bad.html');
    expect(check.status).toBe(2);
    expect(r.status).toBe(2);
    expect(r.stderr).toContain('config bad.json: channels[1].gain: must be > 0; give a positive number');
    expect(r.stderr.trim()).toBe(check.stderr.trim());
    expect(existsSync(join(dir, 'bad.html'))).toBe(false);
  });
});
