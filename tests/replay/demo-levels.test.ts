// The demo's alarm events quote levels a test record can use. Faults and levels come from the committed scenario
// (recordings/demo-scenario.json) and the recording's sidecar, never from numbers written here, so a regenerated
// demo is checked the same way:
//  - each settled level matches the scripted one (±0.5 dB lines, ±1 dB band rise) and scipy.signal.welch over
//    exactly the samples the settled estimate used;
//  - each fault that ends inside the recording has every alarm cleared within 10 s after its scripted end, and a
//    fault that does not end is never cleared;
//  - one incident per scripted fault.
import { spawnSync } from 'node:child_process';
import { readFileSync } from 'node:fs';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { defaultRules } from '../../agent/rules/rules.ts';
import type { FloorlineEvent } from '../../protocol/events.ts';
import { Python, root, tempDir } from '../wav/support.ts';

interface Signal {
  kind: string;
  start?: number;
  end?: number;
  [k: string]: unknown;
}
interface Fault {
  channel: string;
  index: number;
  signal: Signal;
  start: number;
  end: number | null;
}

const scenario = JSON.parse(readFileSync(join(root, 'recordings/demo-scenario.json'), 'utf8')) as {
  duration: number;
  channels: { name: string; signals: Signal[] }[];
};
const sidecar = JSON.parse(readFileSync(join(root, 'recordings/demo.wav.json'), 'utf8')) as {
  sampleRate: number;
  channels: { name: string }[];
};
const baseline = JSON.parse(readFileSync(join(root, 'recordings/demo-baseline.json'), 'utf8')) as {
  settings: { segment: number; overlap: number };
  span: { firstSample: number; lastSample: number };
};
const FS = sidecar.sampleRate;
const SEGMENT = baseline.settings.segment;
const STEP = SEGMENT - Math.floor(baseline.settings.overlap * SEGMENT);
// The recent window the rules judge settled levels on (agent/rules/rules.ts default), in whole segments.
const RECENT_SEGMENTS = Math.max(1, Math.ceil((defaultRules().recentWindow * FS - SEGMENT) / STEP) + 1);
const SPAN = SEGMENT + (RECENT_SEGMENTS - 1) * STEP;
const FAULT_KINDS = new Set(['mains', 'tone', 'band-step', 'overload']);

// Scripted faults: every timed signal of those kinds; tones of one channel starting together are one source
// (a switching supply and its harmonic), as the scenario's notes describe them.
const faults: Fault[] = [];
for (const ch of scenario.channels) {
  ch.signals.forEach((s, index) => {
    if (!FAULT_KINDS.has(s.kind)) return;
    const start = s.start ?? 0;
    const end = s.end !== undefined && s.end < scenario.duration ? s.end : null;
    if (s.kind === 'tone' && faults.some((f) => f.channel === ch.name && f.signal.kind === 'tone' && f.start === start))
      return;
    faults.push({ channel: ch.name, index, signal: s, start, end });
  });
}

let dir: string;
let py: Python;
let events: FloorlineEvent[];

beforeAll(() => {
  dir = tempDir('demo-levels');
  py = new Python();
  const data = join(dir, 'data');
  const r = spawnSync(
    process.execPath,
    [join(root, 'bin/floorline.mjs'), 'demo', '--speed', 'max', '--no-loop', '--no-server', '--quiet', '--data', data],
    { encoding: 'utf8', timeout: 120_000 },
  );
  expect(r.status, r.stderr).toBe(0);
  events = readFileSync(join(data, 'events.jsonl'), 'utf8')
    .trim()
    .split('\n')
    .map((l) => JSON.parse(l) as FloorlineEvent)
    .filter((e) => e.kind === 'alarm');
});
afterAll(() => py.close());

/** The scripted RMS of the line nearest `f` on a channel (mains harmonic k or a tone), and the fault it belongs to. */
function scriptedLine(channel: string, f: number): { rms: number; fault: Fault } | undefined {
  const ch = scenario.channels.find((c) => c.name === channel)!;
  let best: { rms: number; fault: Fault; off: number } | undefined;
  for (const s of ch.signals) {
    const lines: [number, number][] =
      s.kind === 'mains'
        ? (s.harmonics as number[]).map((a, i) => [(i + 1) * (s.fundamental as number), a])
        : s.kind === 'tone'
          ? [[s.frequency as number, s.rms as number]]
          : [];
    for (const [fl, a] of lines) {
      const off = Math.abs(fl - f);
      const fault = faults.find(
        (x) => x.channel === channel && x.start === (s.start ?? 0) && x.signal.kind === s.kind,
      )!;
      if (!best || off < best.off) best = { rms: a, fault, off };
    }
  }
  return best && best.off < 2 * (FS / SEGMENT) ? best : undefined;
}

function faultOf(e: FloorlineEvent): Fault | undefined {
  if (e.frequency !== undefined) return scriptedLine(e.channel, e.frequency)?.fault;
  if (e.rule === 'band-rise')
    return faults.find((f) => f.channel === e.channel && f.signal.kind === 'band-step' && e.sample >= f.start * FS);
  if (e.rule === 'clip')
    return faults.find((f) => f.channel === e.channel && f.signal.kind === 'overload' && e.sample >= f.start * FS);
  return undefined;
}

describe('demo alarm levels', () => {
  it('settled line amplitudes match the scripted RMS within 0.5 dB and scipy.signal.welch on the same samples within 0.25 dB', async () => {
    const settled = events.filter((e) => e.state === 'settled' && e.amplitude !== undefined);
    expect(settled.length).toBeGreaterThan(0);
    for (const e of settled) {
      const s = scriptedLine(e.channel, e.frequency!);
      expect(s, `${e.channel} ${e.frequency} Hz is a scripted line`).toBeDefined();
      // Exactly the segments of the recent window: the last ends at the settled event's last segment.
      const last = e.sample - ((e.sample + 1) % STEP);
      const c = sidecar.channels.findIndex((x) => x.name === e.channel);
      // scipy.signal.welch over those samples (Hann, 50 %, constant detrend); the line's lobe power minus the
      // floor's share (median density 10–60 bins away; Heinzel 2002 §10).
      const ref = await py.run<number>(
        `fs, x = wavfile.read(args[0]); x = x[:, args[1]].astype(np.float64)
f, p = signal.welch(x[args[2]:args[3] + 1], fs=fs, nperseg=args[4], noverlap=args[4] - args[5], window='hann', detrend='constant')
df = f[1]; k = int(np.argmax(np.where(np.abs(f - args[6]) <= 2 * df, p, 0)))
lobe = p[k - 2:k + 3]
floor = np.median(p[(np.abs(f - f[k]) > 10 * df) & (np.abs(f - f[k]) < 60 * df)])
result = float(np.sqrt(max(np.sum(lobe - floor) * df, 0.0)))`,
        join(root, 'recordings/demo.wav'),
        c,
        last - SPAN + 1,
        last,
        SEGMENT,
        STEP,
        e.frequency,
      );
      const db = (a: number, b: number) => 20 * Math.log10(a / b);
      expect(
        Math.abs(db(e.amplitude!, s!.rms)),
        `${e.rule} ${e.frequency} Hz: ${e.amplitude} against scripted ${s!.rms}`,
      ).toBeLessThan(0.5);
      expect(
        Math.abs(db(e.amplitude!, ref)),
        `${e.rule} ${e.frequency} Hz: ${e.amplitude} against scipy ${ref}`,
      ).toBeLessThan(0.25);
      // The event says in words what it carries in numbers (levelDb in the detail; amplitude with an SI prefix).
      expect(e.detail).toContain(`${e.levelDb} dB`);
      expect(e.detail).toMatch(/\d (n|µ|m|p)?V rms/);
    }
  });

  it("each incident's settled band level matches the scripted floor step within 1 dB and scipy.signal.welch within 0.5 dB", async () => {
    const leads = new Map<string, FloorlineEvent>();
    for (const e of events)
      if (e.rule === 'band-rise' && e.state === 'settled' && !leads.has(e.incident!)) leads.set(e.incident!, e);
    expect(leads.size).toBeGreaterThan(0);
    for (const e of leads.values()) {
      const fault = faultOf(e)!;
      expect(fault).toBeDefined();
      const ch = scenario.channels.find((c) => c.name === e.channel)!;
      // The floor: every white term in quadrature, and every flicker term D²·fc/f summed (a channel's budget terms).
      const white = Math.sqrt(
        ch.signals.filter((s) => s.kind === 'white').reduce((a, s) => a + (s.density as number) ** 2, 0),
      );
      const flickerD2fc = ch.signals
        .filter((s) => s.kind === 'flicker')
        .reduce((a, s) => a + (s.density as number) ** 2 * (s.corner as number), 0);
      const flicker = flickerD2fc > 0 ? { density: Math.sqrt(flickerD2fc), corner: 1 } : undefined;
      const c = sidecar.channels.findIndex((x) => x.name === e.channel);
      const last = e.sample - ((e.sample + 1) % STEP);
      // Lines raised on the channel are left out of the band by the rule; leave their lobes out here too.
      const lines = [
        ...new Set(
          events
            .filter((x) => x.channel === e.channel && x.frequency !== undefined && x.state === 'raised')
            .map((x) => x.frequency!),
        ),
      ];
      const r = await py.run<{ scripted: number; scipy: number }>(
        `fs, x = wavfile.read(args[0]); x = x[:, args[1]].astype(np.float64)
lo, hi, seg, step = args[4], args[5], args[6], args[7]
def welch(a, b):
    return signal.welch(x[a:b + 1], fs=fs, nperseg=seg, noverlap=seg - step, window='hann', detrend='constant')
f, live = welch(args[2], args[3]); _, base = welch(args[8], args[9])
df = f[1]
keep = (f >= lo) & (f <= hi)
for fl in args[10]:
    keep &= np.abs(f - fl) > 6 * df
scipy_db = 10 * np.log10(np.sum(live[keep]) / np.sum(base[keep]))
# Scripted: white w² plus flicker D²·fc/f as the floor; the step D² shaped by the same 4th-order Butterworth
# high-pass and low-pass (scipy.signal.butter, bilinear), normalised to mean 1 over [low, high] as the simulator does.
st = args[11]
sos = np.vstack([signal.butter(4, st['high'], 'lowpass', fs=fs, output='sos'), signal.butter(4, st['low'], 'highpass', fs=fs, output='sos')])
grid = np.linspace(lo, hi, 20001)
_, h = signal.sosfreqz(sos, worN=grid, fs=fs)
inband = np.linspace(st['low'], st['high'], 2000)
_, hb = signal.sosfreqz(sos, worN=inband, fs=fs)
fault = st['density'] ** 2 * np.trapezoid(np.abs(h) ** 2, grid) / np.mean(np.abs(hb) ** 2)
floor = args[12] ** 2 * (hi - lo) + (args[13] ** 2 * args[14] * np.log(hi / lo) if args[13] else 0.0)
result = {"scripted": float(10 * np.log10(1 + fault / floor)), "scipy": float(scipy_db)}`,
        join(root, 'recordings/demo.wav'),
        c,
        last - SPAN + 1,
        last,
        e.band![0],
        e.band![1],
        SEGMENT,
        STEP,
        baseline.span.firstSample,
        baseline.span.lastSample,
        lines,
        fault.signal,
        white,
        (flicker?.density as number) ?? 0,
        (flicker?.corner as number) ?? 0,
      );
      expect(
        Math.abs(e.levelDb! - r.scripted),
        `${e.band} settled ${e.levelDb} dB against scripted ${r.scripted}`,
      ).toBeLessThan(1);
      expect(Math.abs(e.levelDb! - r.scipy), `${e.band} settled ${e.levelDb} dB against scipy ${r.scipy}`).toBeLessThan(
        0.5,
      );
      expect(e.detail).toContain(`${e.levelDb} dB`);
    }
  });

  it('clears every alarm of a fault within 10 s after its scripted end, with its peak and duration, and never clears a fault still on', () => {
    for (const f of faults) {
      const mine = events.filter((e) => faultOf(e) === f);
      const raised = mine.filter((e) => e.state === 'raised');
      expect(raised.length, `${f.signal.kind} on ${f.channel}`).toBeGreaterThan(0);
      const cleared = mine.filter((e) => e.state === 'cleared');
      if (f.end === null) {
        expect(cleared, `${f.signal.kind} on ${f.channel} runs to the end`).toEqual([]);
        continue;
      }
      // Each raised alarm has its clear, stamped after the end and within 10 s of it.
      expect(cleared.length).toBe(new Set(raised.map((e) => `${e.rule}|${e.band}|${e.frequency}`)).size);
      for (const e of cleared) {
        expect(e.t, `${e.rule} ${e.band ?? ''} cleared at ${e.t} s, fault ended ${f.end} s`).toBeGreaterThanOrEqual(
          f.end,
        );
        expect(e.t - f.end).toBeLessThan(10);
        expect(e.durationSeconds).toBeGreaterThan(0);
        if (e.rule !== 'clip') {
          expect(e.peakLevelDb).toBeGreaterThan(e.thresholdDb!);
          expect(e.peakSample).toBeGreaterThanOrEqual(f.start * FS);
          expect(e.peakSample).toBeLessThanOrEqual(e.sample);
        }
      }
    }
  });

  it('raises one incident per scripted fault, and every alarm event names it', () => {
    expect(events.every((e) => typeof e.incident === 'string' && e.incident.length > 0)).toBe(true);
    // An incident's fault is that of its lines or clip when it has any (a band rise a line explains is that line's
    // fault: a switch-on transient), else that of its band rises.
    const ids = [...new Set(events.map((e) => e.incident!))];
    const byFault = new Map<Fault, Set<string>>();
    for (const id of ids) {
      const mine = events.filter((e) => e.incident === id);
      const lead = mine.find((e) => e.rule !== 'band-rise') ?? mine[0];
      const f = faultOf(lead);
      expect(
        f,
        `incident ${id} (${lead.rule} on ${lead.channel} at ${lead.t} s) belongs to a scripted fault`,
      ).toBeDefined();
      if (!byFault.has(f!)) byFault.set(f!, new Set());
      byFault.get(f!)!.add(id);
    }
    expect(byFault.size).toBe(faults.length);
    for (const [f, ids] of byFault) expect([...ids], `${f.signal.kind} on ${f.channel}`).toHaveLength(1);
    expect(new Set(events.map((e) => e.incident)).size).toBe(faults.length);
    // The capture of each incident is named after it and the channel that raised it.
    for (const e of events.filter((x) => x.state === 'raised' && x.capture))
      expect(e.capture).toContain(`capture-${e.incident}-${e.channel}-`);
  });
});
