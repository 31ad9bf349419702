// The coherent rule on real replays of WAVs numpy wrote: a line common to two channels raises it with the line's
// frequency and the coherence scipy.signal.coherence gives for the same samples; lines of the same frequency from
// independent sources (independent random phase drifts), or a line on one channel only, do not. Replays repeat
// their events exactly (sample time), and the rules file can disable the rule.
import { readFileSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { FloorlineEvent } from '../../protocol/events.ts';
import { parseRules } from '../../agent/rules/rules.ts';
import { coherenceChanceBound } from '../../dsp/detection/coherence-bound.ts';
import { Python, tempDir } from '../wav/support.ts';
import { runCli } from '../analyze/support.ts';
import { startMonitor } from '../../agent/monitor/monitor.ts';
import { ReplaySource } from '../../agent/sources/replay.ts';
import { testMonitorOptions } from '../support/monitor-options.ts';

let py: Python;
let dir: string;

// numpy.random.default_rng(3), 8 kS/s, 30 s, white noise 10 µV rms per channel. A 73.1 Hz tone (clear of mains harmonics) of 100 µV amplitude
// whose phase drifts as a random walk (0.03 rad rms a sample: a line about a bin wide); "common": one drifting
// tone on ch0 and, at half size, on ch1; "indep": two tones of the same frequency with independent drifts;
// "one": the tone on ch0 only.
const WRITE = String.raw`
fs = 8000; n = fs * 30
t = np.arange(n) / fs
rng = np.random.default_rng(3)
noise = lambda: 1e-5 * rng.standard_normal(n)
tone = lambda: 1e-4 * np.sin(2 * np.pi * 73.1 * t + np.cumsum(0.03 * rng.standard_normal(n)))
c = tone()
wavfile.write(args[0] + "/common.wav", fs, np.stack([c + noise(), 0.5 * c + noise()], 1).astype(np.float32))
wavfile.write(args[0] + "/indep.wav", fs, np.stack([tone() + noise(), tone() + noise()], 1).astype(np.float32))
on = (t < 12).astype(float)
wavfile.write(args[0] + "/stops.wav", fs, np.stack([on * c + noise(), 0.5 * on * c + noise()], 1).astype(np.float32))
wavfile.write(args[0] + "/one.wav", fs, np.stack([tone() + noise(), noise()], 1).astype(np.float32))
result = True
`;

// scipy.signal.coherence (mean over the segments that end by the event's sample, Hann 4096, 50 % overlap, detrend
// constant) at the bin where scipy.signal.welch of ch0 peaks near 73 Hz, the largest of that bin and its neighbours.
const REFERENCE = String.raw`
path, s = args
r, x = wavfile.read(path)
x = x.astype(np.float64)[: s + 1]
f, C = signal.coherence(x[:, 0], x[:, 1], fs=r, window="hann", nperseg=4096, noverlap=2048, detrend="constant")
f, P = signal.welch(x[:, 0], fs=r, window="hann", nperseg=4096, noverlap=2048, detrend="constant")
k = 30 + int(np.argmax(P[30:45]))
result = {"coherence": float(np.max(C[k - 1 : k + 2])), "bin": k}
`;

function replayEvents(file: string, data: string, ...extra: string[]): FloorlineEvent[] {
  const out = join(dir, `${data}.jsonl`);
  const r = runCli(
    'replay',
    join(dir, file),
    '--speed',
    'max',
    '--no-server',
    '--quiet',
    '--data',
    join(dir, data),
    '--events-out',
    out,
    ...extra,
  );
  expect(r.status, r.stderr).toBe(0);
  return readFileSync(out, 'utf8')
    .trim()
    .split('\n')
    .filter((l) => l)
    .map((l) => JSON.parse(l) as FloorlineEvent);
}

const coherent = (events: FloorlineEvent[]) => events.filter((e) => e.rule === 'coherent');
const spursOn = (events: FloorlineEvent[], ch: string) =>
  events.filter((e) => e.rule === 'spur' && e.state === 'raised' && e.channel === ch);

beforeAll(async () => {
  py = new Python();
  dir = tempDir('coherent-rule');
  await py.run(WRITE, dir);
});
afterAll(() => py.close());

describe('coherent rule', () => {
  it('raises on a line common to two channels, with its frequency and the coherence of scipy.signal.coherence', async () => {
    const events = replayEvents('common.wav', 'common-mean', '--average', 'mean');
    const raised = coherent(events).filter((e) => e.state === 'raised');
    expect(raised).toHaveLength(1);
    const e = raised[0];
    expect(e.channel).toBe('ch0');
    expect(e.channels).toEqual(['ch0', 'ch1']);
    // numpy wrote the line at 73.1 Hz; the estimate is good to a bin (8000 / 4096 = 1.95 Hz).
    expect(Math.abs(e.frequency! - 73.1)).toBeLessThan(8000 / 4096);
    const ref = await py.run<{ coherence: number; bin: number }>(REFERENCE, join(dir, 'common.wav'), e.sample);
    // scipy.signal.coherence on the same samples; the event rounds to 3 digits.
    expect(Math.abs(e.coherence! - ref.coherence)).toBeLessThanOrEqual(5e-4 + 1e-12);
    expect(e.coherence!).toBeGreaterThan(0.5);
    // The detail quotes the event's own numbers (docs/ARCHITECTURE.md "Events").
    expect(e.detail).toContain(`${e.frequency!.toFixed(2)} Hz coherent on ch0 and ch1 (γ² ${e.coherence}`);
    expect(e.detail).toContain(`${e.levelDb} dB over the floor`);
    // One pickup, one incident: the coherent line joins the ch0 line's incident.
    expect(e.incident).toBe(spursOn(events, 'ch0')[0].incident);
  }, 180_000);

  it('does not raise for same-frequency lines with independent phase drifts, nor for a line on one channel', () => {
    const indep = replayEvents('indep.wav', 'indep');
    // Both channels do show the line (so the rule had candidates to judge) ...
    expect(spursOn(indep, 'ch0').length).toBeGreaterThan(0);
    expect(spursOn(indep, 'ch1').length).toBeGreaterThan(0);
    // ... but independent sources are not coherent.
    expect(coherent(indep)).toEqual([]);
    const one = replayEvents('one.wav', 'one');
    expect(spursOn(one, 'ch0').length).toBeGreaterThan(0);
    expect(coherent(one)).toEqual([]);
  }, 180_000);

  it('gives the same events on two replays, and none of its own when disabled', () => {
    const strip = (events: FloorlineEvent[]) => events.map(({ wallTime: _w, capture: _c, ...rest }) => rest);
    const a = replayEvents('common.wav', 'twice-a');
    const b = replayEvents('common.wav', 'twice-b');
    expect(coherent(a).length).toBeGreaterThan(0);
    expect(strip(b)).toEqual(strip(a));
    const rules = join(dir, 'off.json');
    writeFileSync(rules, JSON.stringify({ coherent: { enabled: false } }));
    const off = replayEvents('common.wav', 'off', '--rules', rules);
    expect(coherent(off)).toEqual([]);
    expect(strip(off)).toEqual(strip(a.filter((e) => e.rule !== 'coherent')));
  }, 180_000);
});

describe('coherent clear', () => {
  it('clears after the common line stops, with the peak and the duration', () => {
    // A rolling average of 20 segments (5.4 s) forgets the line soon after it stops at 12 s (numpy's "stops.wav").
    const events = coherent(replayEvents('stops.wav', 'stops', '--average', 'rolling:20'));
    const raised = events.find((e) => e.state === 'raised')!;
    const cleared = events.find((e) => e.state === 'cleared')!;
    expect(cleared.sample).toBeGreaterThan(12 * 8000);
    expect(cleared.sample).toBeLessThan(12 * 8000 + 10 * 8000);
    expect(cleared.frequency).toBe(raised.frequency); // the clear carries the frequency it was raised with
    expect(cleared.durationSeconds).toBeCloseTo((cleared.sample - raised.sample) / 8000, 5);
    expect(cleared.peakCoherence!).toBeGreaterThanOrEqual(raised.coherence!);
    expect(cleared.coherence!).toBeLessThan(0.5);
    expect(cleared.incident).toBe(raised.incident);
    // The detail quotes the event's own numbers.
    expect(cleared.detail).toContain(`peak γ² ${cleared.peakCoherence} at sample ${cleared.peakSample}`);
    expect(cleared.detail).toContain(`after ${cleared.durationSeconds} s`);
  }, 120_000);
});

describe('coherence in status', () => {
  it('lists each pair with its bound and γ² at the common line, as the raised event quotes it', async () => {
    const src = new ReplaySource(join(dir, 'common.wav'), { speed: 'max', loop: false });
    const m = await startMonitor(src, testMonitorOptions(join(dir, 'status')));
    await src.done;
    await m.finished;
    const rows = m.status().coherence!;
    expect(rows.map((r) => [r.a, r.b])).toEqual([['ch0', 'ch1']]);
    const line = rows[0].lines.find((l) => Math.abs(l.frequency - 73.1) < 8000 / 4096)!; // numpy wrote 73.1 Hz
    expect(line.active).toBe(true);
    // The bound: max(0.5, 1 − 0.001^(1/(n−1))) (Carter 1987, from memory) for the status's own n.
    const n = rows[0].equivalentAverages;
    expect(rows[0].threshold).toBeCloseTo(Math.max(0.5, 1 - 0.001 ** (1 / (n - 1))), 3);
    expect(line.coherence).toBeGreaterThan(rows[0].threshold);
  }, 120_000);
});

describe('coherent rule settings', () => {
  it('names the faulty key of a rules file', () => {
    expect(() => parseRules({ coherent: { pairs: ['ch0'] } }, 'r.json')).toThrow(
      /coherent\.pairs must be a list of "A:B"/,
    );
    expect(() => parseRules({ coherent: { minCoherence: 2 } }, 'r.json')).toThrow(
      /coherent\.minCoherence must be a number/,
    );
    expect(() => parseRules({ coherent: { window: 1 } }, 'r.json')).toThrow(/unknown key "coherent\.window"/);
  });

  it('uses the chance bound 1 − α^(1/(n−1)) of the MSC of independent Gaussian series', () => {
    // Carter (1987), Proc. IEEE 75(2): P(γ̂² > x) = (1 − x)^(n−1) for n independent averages (from memory); for
    // n = 10 and α = 0.05 the bound is 1 − 0.05^(1/9) = 0.2831 (the value often tabulated, from memory).
    expect(coherenceChanceBound(10, 0.05)).toBeCloseTo(0.2831, 4);
    expect(coherenceChanceBound(1, 0.05)).toBe(1);
  });
});
