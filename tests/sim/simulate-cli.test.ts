import { describe, expect, it, beforeAll } from 'vitest';
import { spawnSync } from 'node:child_process';
import { mkdtempSync, writeFileSync, readFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { FrameDecoder } from '../../agent/framing/decoder.ts';
import { decodeInterleaved } from '../../agent/framing/samples.ts';
import { ScenarioPlayer } from '../../agent/sim/player.ts';
import { parseScenario } from '../../agent/sim/scenario.ts';
import { runPython } from '../framing/run-python.ts';

const root = new URL('../..', import.meta.url).pathname;
const scenarioJson = {
  rate: 10000,
  format: 'int24',
  board: 'test board',
  seed: 3,
  channels: [
    {
      name: 'a',
      unit: 'V',
      perCount: 1e-8,
      signals: [
        { kind: 'white', density: 2e-7 },
        { kind: 'tone', frequency: 1000, rms: 1e-5 },
      ],
    },
    {
      name: 'b',
      unit: 'V',
      perCount: 1e-8,
      signals: [
        { kind: 'white', density: 5e-8 },
        { kind: 'mains', fundamental: 60, harmonics: [3e-6, 1e-6] },
      ],
    },
  ],
  link: { drop: [{ at: 0.5, frames: 3 }], corrupt: [{ at: 0.8, bytes: 1 }], garbage: [{ at: 1.2, bytes: 30 }] },
};
let dir = '';
let scenarioPath = '';

function floorline(args: string[]): { status: number | null; stdout: Buffer; stderr: string } {
  const r = spawnSync(process.execPath, [join(root, 'bin/floorline.mjs'), ...args], {
    encoding: 'buffer',
    maxBuffer: 1 << 28,
  });
  return { status: r.status, stdout: r.stdout, stderr: r.stderr.toString() };
}

/** The scenario regenerated in-process: volts and counts per channel for `frames` instants. */
function regenerate(seed: number, frames: number): { volts: Float64Array[]; counts: Float64Array[] } {
  const player = new ScenarioPlayer(parseScenario(JSON.stringify(scenarioJson), 'test'), seed);
  const volts = scenarioJson.channels.map(() => new Float64Array(frames));
  const counts = scenarioJson.channels.map(() => new Float64Array(frames));
  while (player.position < frames) {
    const n = Math.min(player.framesPerBlock, frames - player.position);
    const first = player.next(n);
    for (let c = 0; c < volts.length; c++) {
      volts[c].set(player.volts[c].subarray(0, n), first);
      counts[c].set(player.counts[c].subarray(0, n), first);
    }
  }
  return { volts, counts };
}

beforeAll(() => {
  dir = mkdtempSync(join(tmpdir(), 'fl-sim-'));
  scenarioPath = join(dir, 'scenario.json');
  writeFileSync(scenarioPath, JSON.stringify(scenarioJson));
});

describe('floorline simulate', () => {
  it('writes a WAV that scipy.io.wavfile reads back as the scenario samples, float32 volts, bit for bit', () => {
    const wav = join(dir, 'out.wav');
    const r = floorline(['simulate', scenarioPath, '--out', wav, '--duration', '3', '--seed', '11']);
    expect(r.status, r.stderr).toBe(0);
    const { volts } = regenerate(11, 30000);
    const interleaved = new Float32Array(30000 * 2);
    for (let i = 0; i < 30000; i++) for (let c = 0; c < 2; c++) interleaved[2 * i + c] = volts[c][i];
    // Outside reader: scipy.io.wavfile; density of channel b's white floor via scipy.signal.welch (mains bins excluded).
    const out = JSON.parse(
      runPython(
        `
import sys, json, numpy as np
from scipy.io import wavfile
from scipy.signal import welch
rate, x = wavfile.read(${JSON.stringify(wav)})
ref = np.frombuffer(sys.stdin.buffer.read(), dtype='<f4').reshape(-1, 2)
f, p = welch(x[:, 1].astype(np.float64), fs=rate, nperseg=1024)
floor = np.median(p[(f > 300) & (f < 4000)])
print(json.dumps([int(rate), str(x.dtype), list(x.shape), bool(np.array_equal(x, ref)), float(floor)]))`,
        new Uint8Array(interleaved.buffer),
      ),
    ) as [number, string, number[], boolean, number];
    expect(out.slice(0, 4)).toEqual([10000, 'float32', [30000, 2], true]);
    // Median of a χ²-distributed Welch estimate sits slightly below its mean (≈ −0.1 dB for ~58 averages); 5 %.
    expect(Math.sqrt(out[4]) / 5e-8).toBeGreaterThan(0.95);
    expect(Math.sqrt(out[4]) / 5e-8).toBeLessThan(1.05);
    const sidecar = JSON.parse(readFileSync(`${wav}.json`, 'utf8'));
    expect(sidecar.channels.map((c: { name: string }) => c.name)).toEqual(['a', 'b']);
  });

  it('streams binary frames on stdout carrying the same counts, with the scenario faults visible to the decoder', () => {
    const r = floorline(['simulate', scenarioPath, '--out', '-', '--duration', '2']);
    expect(r.status, r.stderr).toBe(0);
    const { counts } = regenerate(3, 20000);
    const got = [new Float64Array(20000), new Float64Array(20000)];
    const seen = new Uint8Array(20000);
    let descriptors = 0;
    const dec = new FrameDecoder({
      samples(f) {
        decodeInterleaved(f.bytes, f.offset, f.format, f.channels, f.frames, got, f.sequence);
        seen.fill(1, f.sequence, f.sequence + f.frames);
      },
      descriptor: (d) => {
        descriptors++;
        expect(d.rate).toBe(10000);
      },
    });
    dec.push(new Uint8Array(r.stdout.buffer, r.stdout.byteOffset, r.stdout.length));
    // Faults from the scenario: 3 frames dropped at 0.5 s, one corrupted at 0.8 s, 30 bytes of garbage at 1.2 s;
    // 100 instants per frame (10 ms at 10 kHz).
    expect(dec.counters.crcErrors).toBe(1);
    expect(dec.counters.syncErrors).toBe(1);
    expect(descriptors).toBe(1);
    const missing: number[] = [];
    for (let i = 0; i < 20000; i += 100) if (!seen[i]) missing.push(i);
    expect(missing).toEqual([5000, 5100, 5200, 8000]);
    for (let c = 0; c < 2; c++) for (let i = 0; i < 20000; i++) if (seen[i]) expect(got[c][i]).toBe(counts[c][i]);
  });

  it('streams text lines that numpy.loadtxt reads as the scenario volts exactly', () => {
    const clean = { ...scenarioJson, link: {} };
    const p = join(dir, 'clean.json');
    writeFileSync(p, JSON.stringify(clean));
    const r = floorline(['simulate', p, '--out', '-', '--format', 'text', '--duration', '0.5']);
    expect(r.status, r.stderr).toBe(0);
    const { volts } = regenerate(3, 5000);
    const ref = new Float64Array(10000);
    for (let i = 0; i < 5000; i++) for (let c = 0; c < 2; c++) ref[2 * i + c] = volts[c][i];
    const ok = runPython(
      `
import sys, io, numpy as np
data = sys.stdin.buffer.read()
n = ${r.stdout.length}
x = np.loadtxt(io.StringIO(data[:n].decode()), delimiter=',', skiprows=1)
ref = np.frombuffer(data[n:], dtype='<f8').reshape(-1, 2)
print(bool(np.array_equal(x, ref)))`,
      Buffer.concat([r.stdout, Buffer.from(ref.buffer)]),
    );
    expect(ok.trim()).toBe('True');
  });

  it('refuses a bad scenario with exit 2, naming the field and the fix', () => {
    const p = join(dir, 'bad.json');
    writeFileSync(
      p,
      JSON.stringify({
        ...scenarioJson,
        channels: [{ name: 'a', perCount: 1e-8, signals: [{ kind: 'tone', frequency: 6000, rms: 1 }] }],
      }),
    );
    const r = floorline(['simulate', p, '--out', join(dir, 'x.wav'), '--duration', '1']);
    expect(r.status).toBe(2);
    expect(r.stderr).toContain('channels[0].signals[0].frequency');
    expect(r.stderr).toContain('Nyquist');
  });
});
