// Which commands run the live low-frequency view. Its only readers are the dashboard and the HTTP API (status,
// metrics), so `--no-server` leaves it off (at --speed max it would be most of a replay's work) and a served run
// keeps it. Checked on the options the commands build, and on a real served replay whose /api/status carries the
// view's 0.1–10 Hz peak-to-peak figures.
import { spawn } from 'node:child_process';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { parseArgs } from '../../agent/cli/args.ts';
import { replayCommand } from '../../agent/cli/commands/replay.ts';
import { monitorOptionsFromFlags } from '../../agent/cli/commands/monitor-flags.ts';
import { root, tempDir } from '../wav/support.ts';

const demoWav = join(root, 'recordings/demo.wav');

async function optionsFor(...flags: string[]) {
  const args = parseArgs(replayCommand, [demoWav, '--no-history', '--data', tempDir('no-server-view'), ...flags]);
  return monitorOptionsFromFlags(args, 'replay', { mode: 'lossless', sourceLabel: demoWav });
}

describe('the low-frequency view and --no-server', () => {
  it('is off without a server and on with one', async () => {
    expect((await optionsFor('--no-server')).lowFrequency).toBe(false);
    expect((await optionsFor('--http-port', '0')).lowFrequency).toBeUndefined(); // undefined: the default view
  });

  it('a served replay reports the view in /api/status', async () => {
    const cli = join(root, 'bin/floorline.mjs');
    const args = [cli, 'replay', demoWav, '--speed', '4', '--http-port', '0', '--no-history'];
    const child = spawn(process.execPath, [...args, '--data', tempDir('no-server-view-served')]);
    try {
      let out = '';
      const url = await new Promise<string>((resolve, reject) => {
        child.stdout.on('data', (d: Buffer) => {
          out += d.toString();
          const m = /http:\/\/127\.0\.0\.1:\d+/.exec(out);
          if (m) resolve(m[0]);
        });
        child.on('exit', (code) => reject(new Error(`replay exited (${code}) before serving:\n${out}`)));
      });
      // The 0.1–10 Hz meter needs its band-pass settled and one 10 s window (about 15 s of sample time, < 5 s at 4×).
      let status: { lowFrequency?: { channel: string; peakToPeak: unknown }[] } = {};
      for (let i = 0; i < 200 && !status.lowFrequency?.every((c) => c.peakToPeak); i++) {
        await new Promise((r) => setTimeout(r, 100));
        status = (await (await fetch(`${url}/api/status`)).json()) as typeof status;
      }
      expect(status.lowFrequency?.map((c) => c.channel)).toEqual(['bridge', 'shorted']);
      for (const c of status.lowFrequency ?? []) expect(c.peakToPeak).toMatchObject({ peakToPeak: expect.any(Number) });
    } finally {
      child.kill('SIGINT');
    }
  }, 120_000);
});
