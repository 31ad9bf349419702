// A dashboard client's set-analysis never stops the monitor. Settings that differ from the baseline's refuse a run
// only when the run is started with them; changed while running, even before the first spectrum, they stop the
// baseline comparison with an event and the run goes on.
import { describe, expect, it } from 'vitest';
import { mkdtempSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { startMonitor } from '../../agent/monitor/monitor.ts';
import { ReplaySource } from '../../agent/sources/replay.ts';
import { readBaseline } from '../../agent/baseline/format.ts';
import type { FloorlineEvent } from '../../protocol/events.ts';
import { testMonitorOptions } from '../support/monitor-options.ts';

const root = new URL('../../', import.meta.url).pathname;

async function until(what: string, test: () => boolean, ms = 30_000): Promise<void> {
  for (const end = Date.now() + ms; !test();) {
    if (Date.now() > end) throw new Error(`timed out waiting for ${what}`);
    await new Promise((r) => setTimeout(r, 20));
  }
}

describe('set-analysis while running', () => {
  it('before the first spectrum, to settings other than the baseline’s: the comparison stops, the run goes on', async () => {
    const dir = mkdtempSync(join(tmpdir(), 'floorline-live-settings-'));
    const where = join(root, 'recordings/demo-baseline.json');
    const baseline = await readBaseline(where);
    expect(baseline.settings.segment).toBe(4096); // taken with the default settings the test monitor starts with
    // Real time: the first spectrum needs 4096 samples at 8000 S/s (0.5 s), so the change below comes before it.
    const src = new ReplaySource(join(root, 'recordings/demo.wav'), { speed: 1 });
    const m = await startMonitor(src, testMonitorOptions(dir, { baseline: { baseline, where } }));
    const events: FloorlineEvent[] = [];
    m.pipeline.on('event', (e) => events.push(e));
    let ended: unknown = 'running';
    m.finished.then(
      () => (ended = 'ended'),
      (err: unknown) => (ended = err),
    );
    expect(m.latestSnapshot()).toBeNull();
    m.setAnalysis({ segment: 2048 });
    await until('two spectra at segment 2048', () => {
      const s = m.latestSnapshot();
      return ended !== 'running' || (s !== null && s.settings.segment === 2048 && s.sample >= 2 * 2048);
    });
    expect(ended).toBe('running');
    const stopped = events.find((e) => e.rule === 'baseline' && e.state === 'cleared');
    expect(stopped?.detail).toMatch(
      /baseline comparison stopped: the analysis now differs from the baseline's in segment/,
    );
    await src.stop();
    await m.finished;
    rmSync(dir, { recursive: true, force: true });
  }, 60_000);
});
