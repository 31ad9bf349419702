// The service unit in contrib/: systemd's own checker accepts it, and it carries the hardening the README promises.
import { spawnSync } from 'node:child_process';
import { readFileSync } from 'node:fs';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';

const unit = join(new URL('../..', import.meta.url).pathname, 'contrib/floorline.service');

describe('contrib/floorline.service', () => {
  it('passes systemd-analyze verify', () => {
    const r = spawnSync('systemd-analyze', ['verify', unit], { encoding: 'utf8' });
    expect(r.error, 'systemd-analyze is part of systemd (Debian package systemd)').toBeUndefined();
    expect(r.status, r.stderr).toBe(0);
    // verify reports unknown or misspelt directives on stderr without failing; none may appear.
    expect(r.stderr).not.toMatch(/Unknown key|Invalid|Failed/);
  });

  it('runs as its own user with the hardening options', () => {
    const text = readFileSync(unit, 'utf8');
    for (const line of [
      'User=floorline',
      'Restart=on-failure',
      'NoNewPrivileges=yes',
      'ProtectSystem=strict',
      'ProtectHome=yes',
      'PrivateTmp=yes',
      'SupplementaryGroups=dialout',
      'ReadWritePaths=/var/lib/floorline',
    ]) {
      expect(text.split('\n')).toContain(line);
    }
    expect(text).toMatch(
      /^ExecStart=\S+node \S+floorline\.mjs run --config \/etc\/floorline\/rig\.json --data \/var\/lib\/floorline/m,
    );
  });
});
