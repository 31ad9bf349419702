// A dashboard capture never replaces an existing baseline unless the request says replace.
import { describe, expect, it } from 'vitest';
import { mkdirSync, mkdtempSync, readFileSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { startMonitor } from '../../agent/monitor/monitor.ts';
import { ReplaySource } from '../../agent/sources/replay.ts';
import { testMonitorOptions } from '../support/monitor-options.ts';

const root = new URL('../../', import.meta.url).pathname;

describe('capture-baseline', () => {
  it('refuses an existing name with code exists, and replaces it only when asked', async () => {
    const dir = mkdtempSync(join(tmpdir(), 'floorline-overwrite-'));
    mkdirSync(join(dir, 'baselines'), { recursive: true });
    writeFileSync(join(dir, 'baselines', 'quiet.json'), 'keep me');
    const src = new ReplaySource(join(root, 'recordings/demo.wav'), { speed: 'max' });
    const m = await startMonitor(src, testMonitorOptions(dir));
    await expect(m.captureBaseline({ seconds: 3, name: 'quiet.json' })).rejects.toMatchObject({
      code: 'exists',
      message: expect.stringMatching(/baselines\/quiet\.json exists; .*"replace": true/),
    });
    expect(readFileSync(join(dir, 'baselines', 'quiet.json'), 'utf8')).toBe('keep me');
    const replaced = await m.captureBaseline({ seconds: 3, name: 'quiet.json', replace: true });
    expect(replaced.file).toBe('baselines/quiet.json');
    expect(JSON.parse(readFileSync(join(dir, 'baselines', 'quiet.json'), 'utf8')).schema).toMatch(/baseline/);
    await src.stop();
    await m.finished;
  });
});
