// `analyze --coherence A:B`: magnitude-squared coherence and cross-spectral density equal to scipy.signal.coherence
// and scipy.signal.csd on the same samples (same segment, window, overlap, detrend) to 1e-9 relative.
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { Python, tempDir } from '../wav/support.ts';
import { runCli } from '../analyze/support.ts';

let py: Python;
let dir: string;

// numpy.random.default_rng(5), 8 kS/s, 2^16 samples: a common pickup (a 50 Hz line and low-passed noise by
// scipy.signal.lfilter) on "bridge" and, at half the size and delayed, on "shorted"; "spare" has only its own noise.
const WRITE = String.raw`
rng = np.random.default_rng(5)
n = 1 << 16
t = np.arange(n) / 8000.0
common = signal.lfilter([0.1], [1, -0.9], rng.standard_normal(n)) + 0.5 * np.sin(2 * np.pi * 50 * t)
x = np.stack([common + 0.3 * rng.standard_normal(n), 0.5 * np.roll(common, 3) + 0.3 * rng.standard_normal(n), 0.3 * rng.standard_normal(n)], axis=1)
wavfile.write(args[0], 8000, (1e-3 * x).astype(np.float32))
result = True
`;

const REFERENCE = String.raw`
path, a, b, N, det = args
r, x = wavfile.read(path)
x = x.astype(np.float64)
f, C = signal.coherence(x[:, a], x[:, b], fs=r, window="hann", nperseg=N, noverlap=N // 2, detrend=det)
f, P = signal.csd(x[:, a], x[:, b], fs=r, window="hann", nperseg=N, noverlap=N // 2, detrend=det)
result = {"f": f.tolist(), "coherence": C.tolist(), "re": P.real.tolist(), "im": P.imag.tolist()}
`;

interface Pair {
  a: string;
  b: string;
  frequency: number[];
  coherence: number[];
  csdRe: number[];
  csdIm: number[];
}

beforeAll(async () => {
  py = new Python();
  dir = tempDir('measure-coherence');
  // Our own channel names come from a sidecar: write one beside the scipy file.
  await py.run(WRITE, join(dir, 'rig.wav'));
  await py.run(
    String.raw`
import json as j
open(args[0] + ".json", "w").write(j.dumps({"schema": "floorline.recording/1", "sampleRate": 8000, "firstSample": 0,
  "channels": [{"name": "bridge", "unit": "V"}, {"name": "shorted", "unit": "V"}, {"name": "spare", "unit": "V"}]}))
result = True`,
    join(dir, 'rig.wav'),
  );
});
afterAll(() => py.close());

async function expectScipy(pair: Pair, a: number, b: number, segment: number, detrend: string | false): Promise<void> {
  const ref = await py.run<{ f: number[]; coherence: number[]; re: number[]; im: number[] }>(
    REFERENCE,
    join(dir, 'rig.wav'),
    a,
    b,
    segment,
    detrend,
  );
  expect(pair.frequency).toEqual(ref.f);
  let worstC = 0;
  let worstP = 0;
  for (let k = 0; k < ref.f.length; k++) {
    worstC = Math.max(worstC, Math.abs(pair.coherence[k] - ref.coherence[k]) / ref.coherence[k]);
    // Complex relative error |ours − scipy| / |scipy| (a near-zero real or imaginary part alone has no relative scale).
    const mag = Math.hypot(ref.re[k], ref.im[k]);
    worstP = Math.max(worstP, Math.hypot(pair.csdRe[k] - ref.re[k], pair.csdIm[k] - ref.im[k]) / mag);
  }
  expect(worstC).toBeLessThan(1e-9); // scipy.signal.coherence
  expect(worstP).toBeLessThan(1e-9); // scipy.signal.csd
}

describe('analyze --coherence', () => {
  it('equals scipy.signal.coherence and scipy.signal.csd for pairs given by name and by index', async () => {
    const r = runCli(
      'analyze',
      join(dir, 'rig.wav'),
      '--coherence',
      'bridge:shorted',
      '--coherence',
      '0:2',
      '--segment',
      '1024',
      '--json',
    );
    expect(r.status, r.stderr).toBe(0);
    const report = JSON.parse(r.stdout) as { coherence: Pair[] };
    expect(report.coherence.map((p) => `${p.a}:${p.b}`)).toEqual(['bridge:shorted', 'bridge:spare']);
    await expectScipy(report.coherence[0], 0, 1, 1024, 'constant');
    await expectScipy(report.coherence[1], 0, 2, 1024, 'constant');
    // The common 50 Hz line is coherent on bridge and shorted, not on spare.
    const near50 = (p: Pair): number => Math.max(...p.coherence.filter((_, k) => Math.abs(p.frequency[k] - 50) < 8));
    expect(near50(report.coherence[0])).toBeGreaterThan(0.95);
    expect(near50(report.coherence[1])).toBeLessThan(0.1);
  });

  it('follows the detrend and segment settings as scipy does (linear, 512)', async () => {
    const r = runCli(
      'analyze',
      join(dir, 'rig.wav'),
      '--coherence',
      'shorted:bridge',
      '--segment',
      '512',
      '--detrend',
      'linear',
      '--json',
    );
    expect(r.status).toBe(0);
    await expectScipy((JSON.parse(r.stdout) as { coherence: Pair[] }).coherence[0], 1, 0, 512, 'linear');
  });

  it('refuses an unknown channel or a channel paired with itself, naming the channels', () => {
    const r = runCli('analyze', join(dir, 'rig.wav'), '--coherence', 'bridge:nope');
    expect(r.status).toBe(2);
    expect(r.stderr).toMatch(/no channel 'nope'; the channels are 0=bridge, 1=shorted, 2=spare/);
    const s = runCli('analyze', join(dir, 'rig.wav'), '--coherence', '1:shorted');
    expect(s.status).toBe(2);
    expect(s.stderr).toMatch(/both sides are channel shorted/);
  });
});
