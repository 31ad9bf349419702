// `analyze --lines` and the live spur/mains rules agree on the same samples: a replay with mean averaging ends on
// the same spectrum as the offline report; the live SpurDetector run on it names the same lines with the same
// amplitudes and harmonic orders; and the replay's raised events name the same lines. Amplitudes and frequencies
// are checked against the tones numpy put in.
import { readFileSync } from 'node:fs';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { leakageEnvelope } from '../../dsp/detection/leakage.ts';
import { makeWindow } from '../../dsp/windows.ts';
import { defaultRules } from '../../agent/rules/rules.ts';
import { IncidentBook } from '../../agent/rules/incidents.ts';
import { MAX_SKIRT_BINS, SpurDetector } from '../../agent/rules/spur-detector.ts';
import { Python, tempDir } from '../wav/support.ts';
import { runCli } from '../analyze/support.ts';

let py: Python;
let dir: string;
let wav: string;

// numpy.random.default_rng(8): white noise 1 µFS rms at 8 kS/s for 30 s, mains lines at 50.02 Hz (0.2 µFS rms) and
// its 3rd harmonic 150.06 Hz (0.1 µFS rms), and an unrelated line at 1234.5 Hz (0.15 µFS rms).
const TONES = [
  { f: 50.02, rms: 2e-7, harmonic: 1 },
  { f: 150.06, rms: 1e-7, harmonic: 3 },
  { f: 1234.5, rms: 1.5e-7, harmonic: 0 },
];
const WRITE = String.raw`
rng = np.random.default_rng(8)
fs = 8000; n = fs * 30; t = np.arange(n) / fs
x = 1e-6 * rng.standard_normal(n)
for tone in args[1]:
    x += np.sqrt(2) * tone["rms"] * np.sin(2 * np.pi * tone["f"] * t + 1.0)
wavfile.write(args[0], fs, x.astype(np.float32))
result = True
`;

interface Line {
  frequency: number;
  amplitude: number;
  dbOverFloor: number;
  harmonic?: number;
}
interface Report {
  settings: { segment: number; binHz: number; equivalentAverages: number; averages: number };
  channels: { frequency: number[]; psd: number[]; lines: Line[] }[];
}

let offline: Report;

beforeAll(async () => {
  py = new Python();
  dir = tempDir('measure-lines');
  wav = join(dir, 'lines.wav');
  await py.run(WRITE, wav, TONES);
  const r = runCli('analyze', wav, '--lines', '--json');
  expect(r.status, r.stderr).toBe(0);
  offline = JSON.parse(r.stdout) as Report;
});
afterAll(() => py.close());

describe('analyze --lines', () => {
  it('lists the lines numpy put in: frequency within 0.05 Hz, floor-subtracted rms within 8 %, mains orders', () => {
    const lines = offline.channels[0].lines;
    expect(lines.length).toBe(TONES.length);
    for (const [i, tone] of TONES.entries()) {
      expect(Math.abs(lines[i].frequency - tone.f)).toBeLessThan(0.05);
      // The weakest line stands 11 dB over the floor: the noise inside its lobe moves the estimate by a few %.
      expect(Math.abs(lines[i].amplitude / tone.rms - 1)).toBeLessThan(0.08);
      expect(lines[i].harmonic ?? 0).toBe(tone.harmonic);
      expect(lines[i].dbOverFloor).toBeGreaterThan(10);
    }
  });

  it('the live rules on the same samples: same spectrum, same lines from the live SpurDetector, same raised events', () => {
    const events = join(dir, 'events.jsonl');
    const snaps = join(dir, 'snaps.jsonl');
    const r = runCli(
      'replay',
      wav,
      '--speed',
      'max',
      '--no-server',
      '--quiet',
      '--average',
      'mean',
      '--events-out',
      events,
      '--snapshots-out',
      snaps,
      '--data',
      join(dir, 'data'),
    );
    expect(r.status, r.stderr).toBe(0);
    const last = JSON.parse(readFileSync(snaps, 'utf8').trimEnd().split('\n').at(-1)!) as {
      sample: number;
      channels: { psd: number[]; equivalentAverages: number; segmentsUsed: number }[];
    };
    const live = last.channels[0];
    const ch = offline.channels[0];
    // A mean over every segment from sample 0: the live estimate at the end is the offline one.
    expect(live.segmentsUsed).toBe(offline.settings.averages);
    let worst = 0;
    for (let k = 0; k < ch.psd.length; k++) worst = Math.max(worst, Math.abs(live.psd[k] - ch.psd[k]) / ch.psd[k]);
    expect(worst).toBeLessThan(1e-12);
    expect(Math.abs(live.equivalentAverages - offline.settings.equivalentAverages)).toBeLessThan(1e-9);

    // The live spur rule's own finder and mains classifier on that spectrum (a zero baseline: every line is new).
    const win = makeWindow('hann', offline.settings.segment);
    const detector = new SpurDetector(
      'ch0',
      Float64Array.from(ch.frequency),
      offline.settings.binHz,
      win.mainLobeHalfWidth,
      leakageEnvelope(win.values, MAX_SKIRT_BINS),
      new Float64Array(ch.psd.length),
      defaultRules(),
      8000,
      'V',
      new IncidentBook(8000, offline.settings.binHz),
    );
    const psd = Float64Array.from(live.psd);
    detector.onSpectrum(
      psd,
      live.equivalentAverages,
      { psd, equivalentAverages: live.equivalentAverages, spanSamples: 0 },
      last.sample,
      '2026-01-01T00:00:00Z',
      [],
    );
    const found = detector.tracked
      .map((t) => ({ frequency: t.frequency, amplitude: t.amplitude, harmonic: t.harmonic }))
      .sort((a, b) => a.frequency - b.frequency);
    expect(found).toEqual(
      ch.lines.map((l) => ({ frequency: l.frequency, amplitude: l.amplitude, harmonic: l.harmonic ?? 0 })),
    );

    // The replay's raised spur/mains events: the same lines (within a bin), the same orders, amplitudes within 10 %
    // (raised early, on fewer averages).
    const raised = readFileSync(events, 'utf8')
      .trimEnd()
      .split('\n')
      .map(
        (l) =>
          JSON.parse(l) as { rule: string; state: string; frequency: number; amplitude: number; harmonic?: number },
      )
      .filter((e) => (e.rule === 'spur' || e.rule === 'mains') && e.state === 'raised')
      .sort((a, b) => a.frequency - b.frequency);
    expect(raised.length).toBe(ch.lines.length);
    for (const [i, e] of raised.entries()) {
      expect(Math.abs(e.frequency - ch.lines[i].frequency)).toBeLessThan(offline.settings.binHz);
      expect(e.harmonic ?? 0).toBe(ch.lines[i].harmonic ?? 0);
      expect(Math.abs(e.amplitude / ch.lines[i].amplitude - 1)).toBeLessThan(0.1);
    }
  });
});
