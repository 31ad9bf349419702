// --threads on the commands that run a monitor, as real processes: `replay` of the demo at 1 and 2 threads prints
// the same summary (snapshot count, digest, events), and a value outside 1…64 or not whole is refused with exit 2
// and a message naming the flag and what to give. The replays serve (port 0): with --no-server the low-frequency
// view, the part --threads moves to workers, is off.
import { describe, expect, it } from 'vitest';
import { tempDir } from '../wav/support.ts';
import { DEMO_WAV, floorline } from '../support/cli.ts';

const replay = (...extra: string[]) =>
  floorline(['replay', DEMO_WAV, '--speed', 'max', '--http-port', '0', '--no-history', '--quiet', ...extra]);

describe('--threads N', () => {
  it('replay prints the same summary at 1 and 2 threads', () => {
    const [one, two] = [1, 2].map((t) => replay('--threads', String(t), '--data', tempDir(`threads-cli-${t}`)));
    expect(one.status, one.stderr).toBe(0);
    expect(two.status, two.stderr).toBe(0);
    // The status lines carry wall-clock figures; the summary's snapshot, digest and event lines must match.
    const summary = (out: string) => out.split('\n').filter((l) => /^(snapshots|events|health) /.test(l));
    expect(summary(one.stdout).join('\n')).toMatch(/snapshots\s+\d+, digest [0-9a-f]{16}\nevents\s+\d+/);
    expect(summary(two.stdout)).toEqual(summary(one.stdout));
  }, 300_000);

  it('refuses 65, 1.5 (replay) and 0 (demo) with exit 2, naming the flag and the range', () => {
    for (const bad of ['65', '1.5']) {
      const r = replay('--threads', bad);
      expect(r.status).toBe(2);
      expect(r.stderr).toMatch(new RegExp(`--threads .*${bad.replace('.', '\\.')}.*integer from 1 to 64`));
    }
    const demo = floorline(['demo', '--threads', '0']);
    expect(demo.status).toBe(2);
    expect(demo.stderr).toMatch(/--threads 0 is out of range/);
  }, 300_000);
});
