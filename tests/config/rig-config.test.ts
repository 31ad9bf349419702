// Rig config: the schema plus the checks beyond it. Each bad config must be refused naming its JSON path; every
// example config in the repository (contrib/*.json and the README's rig config) must be accepted.
import { spawnSync } from 'node:child_process';
import { mkdtempSync, readdirSync, readFileSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { checkRigConfig, ConfigError } from '../../agent/config/rig-config.ts';
import { applyRigConfig } from '../../agent/config/apply-config.ts';
import { parseArgs } from '../../agent/cli/args.ts';
import { runCommand } from '../../agent/cli/commands/run.ts';

const root = new URL('../..', import.meta.url).pathname;
const bin = join(root, 'bin/floorline.mjs');

// [config, the path the message must name, a word of the reason]
const BAD: [unknown, string, string][] = [
  [
    {
      channels: [
        { name: 'a', unit: 'V' },
        { name: 'b', unit: 'V', gain: 0 },
      ],
    },
    'channels[1].gain: must be > 0',
    'positive',
  ],
  [{ channels: [{ name: 'a', unit: 'V', gain: -3 }] }, 'channels[0].gain: must be > 0', 'positive'],
  [{ channels: [{ name: 'a' }] }, 'channels[0]: must have required property', 'unit'],
  [{ channels: [{ name: 'a', unit: 'V', voltsPerCount: 'x' }] }, 'channels[0].voltsPerCount: must be number', 'type'],
  [{ channels: [{ name: 'a', unit: 'V', inputReferred: true }] }, 'channels[0].inputReferred', 'gain'],
  [
    {
      channels: [
        { name: 'a', unit: 'V' },
        { name: 'a', unit: 'V' },
      ],
    },
    'channels[1].name',
    'twice',
  ],
  [{ channels: [] }, 'channels: must NOT have fewer than 1 items', 'at least one'],
  [{ source: { format: 'hex' } }, 'source.format: must be equal to one of the allowed values', '"binary"'],
  [{ source: { rate: 0 } }, 'source.rate: must be > 0', 'positive'],
  [{ analysis: { segment: 1000 } }, 'analysis.segment', 'power of two'],
  [{ analysis: { overlap: 0.99 } }, 'analysis.overlap: must be <= 0.95', 'smaller'],
  [{ analysis: { window: 'triangle' } }, 'analysis.window', 'window'],
  [{ bands: ['100-200'] }, 'bands[0]', 'LO:HI'],
  [{ bands: ['200:100'] }, 'bands[0]', '200'],
  [{ rules: { band: { marginDb: 99 } } }, 'rules:', 'band.marginDb'],
  [{ notify: [{ webhook: 'ftp://example.invalid/x' }] }, 'notify[0].webhook', 'http'],
  [{ notify: [{ webhook: 'http://127.0.0.1:1/x', states: ['opened'] }] }, 'notify[0].states[0]', 'allowed'],
  [{ notify: [{ exec: ['/no/such/program'] }] }, 'notify[0].exec[0]', 'does not exist'],
  [{ notify: [{ exec: ['logger'] }] }, 'notify[0].exec[0]', 'absolute path'],
  [{ notify: [{ exec: [] }] }, 'notify[0].exec', 'at least one'],
  [{ notify: [{ exec: ['/bin/true'], shell: 'sh -c' }] }, 'notify[0].shell', 'not a known key'],
  [{ retention: { recordings: { maxBytes: 0 } } }, 'retention.recordings.maxBytes: must be >= 1', 'larger'],
  [{ retention: { minFreeBytes: -1 } }, 'retention.minFreeBytes', '>= 0'],
  [{ server: { port: 70000 } }, 'server.port: must be <= 65535', 'smaller'],
  [{ server: { token: 'secret-in-file' } }, 'server.token', 'not a known key'],
  [{ masks: { bridge: 'no-such-mask.csv' } }, 'masks.bridge', 'does not exist'],
  [{ colour: 'blue' }, 'colour', 'not a known key'],
];

describe('rig config check', () => {
  it.each(BAD)('refuses %j naming the path', (config, path, reason) => {
    let message = '';
    try {
      checkRigConfig(config, join(root, 'bad.json'));
    } catch (err) {
      expect(err).toBeInstanceOf(ConfigError);
      message = (err as Error).message;
    }
    expect(message).toContain(path);
    expect(message).toContain(reason);
  });

  it('`config check` exits 2 naming the path, and 0 printing the effective settings', () => {
    const dir = mkdtempSync(join(tmpdir(), 'fl-config-'));
    const bad = join(dir, 'bad.json');
    writeFileSync(
      bad,
      JSON.stringify({
        channels: [
          { name: 'a', unit: 'V' },
          { name: 'b', unit: 'V', gain: 0 },
        ],
      }),
    );
    const r = spawnSync(process.execPath, [bin, 'config', 'check', bad], { encoding: 'utf8' });
    expect(r.status).toBe(2);
    expect(r.stderr).toContain('channels[1].gain: must be > 0');
    const good = join(dir, 'good.json');
    writeFileSync(
      good,
      JSON.stringify({
        notify: [{ webhook: 'https://example.invalid/h', headers: { Authorization: 'Bearer sekrit-token-value' } }],
      }),
    );
    const ok = spawnSync(process.execPath, [bin, 'config', 'check', good], { encoding: 'utf8' });
    expect(ok.status, ok.stderr).toBe(0);
    const eff = JSON.parse(ok.stdout);
    // Defaults filled in (segment 4096 Hann 50 % is the documented default analysis).
    expect(eff.analysis).toMatchObject({ segment: 4096, window: 'hann', overlap: 0.5 });
    // A secret in a header is never printed.
    expect(ok.stdout).not.toContain('sekrit');
  });

  it('accepts every example config in the repository', () => {
    const files = readdirSync(join(root, 'contrib'))
      .filter((f) => f.endsWith('.json'))
      .map((f) => join(root, 'contrib', f));
    expect(files.length).toBeGreaterThan(0);
    for (const f of files) {
      const r = spawnSync(process.execPath, [bin, 'config', 'check', f], { encoding: 'utf8' });
      expect(r.status, `${f}: ${r.stderr}`).toBe(0);
    }
    // The README's complete rig config (the fenced block after the "rig config" marker).
    const readme = readFileSync(join(root, 'README.md'), 'utf8');
    const m = /<!-- rig-config -->\s*```json\n([\s\S]*?)```/.exec(readme);
    expect(m, 'README has a rig config block').not.toBeNull();
    expect(() => checkRigConfig(JSON.parse(m![1]), join(root, 'README.json'))).not.toThrow();
  });

  it('flags override the file; the file fills what the flags leave', () => {
    const loaded = checkRigConfig(
      { source: { port: '/dev/ttyACM0', rate: 1000 }, analysis: { segment: 8192 }, bands: ['10:100'] },
      join(root, 'x.json'),
    );
    const args = parseArgs(runCommand, ['--segment', '1024']);
    applyRigConfig(args, runCommand.flags, loaded);
    expect(args.flags.segment).toBe(1024);
    expect(args.flags.port).toBe('/dev/ttyACM0');
    expect(args.flags.rate).toBe(1000);
    expect(args.flags.band).toEqual(['10:100']);
  });
});
