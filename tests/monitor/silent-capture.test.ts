// A dashboard baseline capture on a stream with a silent channel (a shorted or disconnected input reads exact
// zeros) is refused naming the channel; no file is left under baselines/ and the monitor goes on analysing.
// A zero floor cannot be compared against: every band rise over it would be infinite.
import { describe, expect, it } from 'vitest';
import { existsSync, mkdtempSync, readdirSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { startMonitor } from '../../agent/monitor/monitor.ts';
import { ReplaySource } from '../../agent/sources/replay.ts';
import { WavWriter } from '../../agent/wav/writer.ts';
import { SeededRandom } from '../../dsp/random.ts';
import { testMonitorOptions } from '../support/monitor-options.ts';

describe('capture-baseline on a silent channel', () => {
  it('is refused naming the channel, leaves no file, and the run goes on', async () => {
    const dir = mkdtempSync(join(tmpdir(), 'floorline-silent-capture-'));
    const wav = join(dir, 'rig.wav');
    const frames = 8000 * 30;
    const noise = new SeededRandom(4).fillGaussian(new Float64Array(frames), 1e-3);
    const w = new WavWriter(
      wav,
      {
        sampleRate: 8000,
        channels: [
          { name: 'live', unit: 'V' },
          { name: 'open', unit: 'V' },
        ],
        firstSample: 0,
      },
      { durable: false },
    );
    w.append([noise, new Float64Array(frames)], frames);
    w.close();
    const src = new ReplaySource(wav, { speed: 'max', loop: true });
    const m = await startMonitor(src, testMonitorOptions(join(dir, 'data')));
    let ended = false;
    void m.finished.then(() => (ended = true));
    await expect(m.captureBaseline({ seconds: 5, name: 'quiet.json' })).rejects.toMatchObject({
      code: 'failed',
      message: expect.stringMatching(/channel open is silent \(its density is zero above DC/),
    });
    const baselines = join(dir, 'data', 'baselines');
    expect(existsSync(baselines) ? readdirSync(baselines) : []).toEqual([]);
    // Still analysing: spectra keep coming after the refusal.
    const after = m.latestSnapshot()!.sample;
    for (let i = 0; i < 500 && m.latestSnapshot()!.sample === after; i++) await new Promise((r) => setTimeout(r, 10));
    expect(m.latestSnapshot()!.sample).toBeGreaterThan(after);
    expect(ended).toBe(false);
    await src.stop();
    await m.finished;
    rmSync(dir, { recursive: true, force: true });
  }, 60_000);
});
