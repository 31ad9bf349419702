// `analyze` on a recording with a clip: the span flags, median averaging, --exclude-clipped and its counts, the
// clip warning, the confidence interval in the text report and a CSV piped into `head`. Every figure is checked
// against scipy/numpy on the same samples (the call is named beside each check).
import { spawnSync } from 'node:child_process';
import { copyFileSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { Python, root, tempDir } from '../wav/support.ts';
import { runCli } from './support.ts';

let py: Python;
let dir: string;
let clipPath: string;

const RATE = 10000;
const N = 2048;

// Two channels of white noise (numpy.random.default_rng(13)), 2^17 samples at 10 kS/s; channel 0 gets a 120 Hz
// burst at 1.5 × full scale over samples 60000–60499, clipped to ±1 FS by numpy.clip; written by scipy.io.wavfile.
const WRITE = String.raw`
rng = np.random.default_rng(13)
n = 1 << 17
x = 1e-3 * rng.standard_normal((n, 2))
t = np.arange(n) / 10000.0
burst = slice(60000, 60500)
x[burst, 0] += 1.5 * np.sin(2 * np.pi * 120 * t[burst])
x = np.clip(x, -1.0, 1.0).astype(np.float32)
wavfile.write(args[0], 10000, x)
result = True
`;

// The reference: per-segment densities from scipy.signal.spectrogram (mode='psd', the periodograms whose mean is
// scipy.signal.welch), a segment is bad when it holds |x| ≥ 0.999 on any channel (the 0.1 % clip rule), the mean of
// the good ones; K_eq by Welch's 1967 formula in numpy from scipy.signal.get_window; scipy.signal.welch on a span
// and with average='median'; scipy.stats.chi2.ppf for the 95 % interval.
const REFERENCE = String.raw`
from scipy import stats
path, N, a, b = args
r, x = wavfile.read(path)
x = x.astype(np.float64)
step = N - N // 2
bad = np.abs(x) >= 0.999
out = {"clipped": bad.sum(axis=0).tolist(), "first": int(np.argmax(bad[:, 0])), "last": int(len(bad) - 1 - np.argmax(bad[::-1, 0]))}
anybad = bad.any(axis=1)
S = [signal.spectrogram(x[:, c], fs=r, window="hann", nperseg=N, noverlap=N // 2, detrend="constant", scaling="density", mode="psd")[2] for c in range(2)]
K = S[0].shape[-1]
good = np.array([not anybad[j * step: j * step + N].any() for j in range(K)])
out["segments"] = int(K)
out["excluded"] = int((~good).sum())
out["psdExcluded"] = [S[c][:, good].mean(axis=1).tolist() for c in range(2)]
out["welchCheck"] = float(np.max(np.abs(S[0].mean(axis=1) - signal.welch(x[:, 0], fs=r, nperseg=N)[1]) / signal.welch(x[:, 0], fs=r, nperseg=N)[1]))
w = signal.get_window("hann", N)
def keq(k):
    rho = [(np.sum(w[: N - j * step] * w[j * step:]) ** 2) / np.sum(w ** 2) ** 2 for j in range(1, int(np.ceil(N / step)))]
    return k / (1 + 2 * sum((1 - j / k) * rho[j - 1] for j in range(1, min(len(rho), k - 1) + 1)))
out["keqExcluded"] = keq(int(good.sum()))
out["psdSpan"] = [signal.welch(x[a:b, c], fs=r, nperseg=N)[1].tolist() for c in range(2)]
out["psdMedian"] = [signal.welch(x[a:b, c], fs=r, nperseg=N, average="median")[1].tolist() for c in range(2)]
nu = 2 * keq(int(good.sum()))
out["ciDb"] = [10 * np.log10(nu / stats.chi2.ppf(0.975, nu)), 10 * np.log10(nu / stats.chi2.ppf(0.025, nu))]
result = out
`;

interface Reference {
  clipped: number[];
  first: number;
  last: number;
  segments: number;
  excluded: number;
  psdExcluded: number[][];
  welchCheck: number;
  keqExcluded: number;
  psdSpan: number[][];
  psdMedian: number[][];
  ciDb: [number, number];
}

interface Report {
  samples: number;
  settings: {
    averages: number;
    average: string;
    excludedSegments: number;
    equivalentAverages: number;
    span: { firstSample: number; endSample: number };
  };
  channels: {
    name: string;
    psd: number[];
    asd: number[];
    clippedSamples: number;
    bands: { low: number; high: number; rms: number }[];
  }[];
}

let ref: Reference;
const FROM = 10000;
const TO = 90000;

function worstRel(ours: number[], theirs: number[]): number {
  let worst = 0;
  for (let k = 0; k < theirs.length; k++) worst = Math.max(worst, Math.abs(ours[k] - theirs[k]) / theirs[k]);
  return worst;
}

beforeAll(async () => {
  py = new Python();
  dir = tempDir('analyze-clip');
  clipPath = join(dir, 'clip.wav');
  await py.run(WRITE, clipPath);
  ref = await py.run<Reference>(REFERENCE, clipPath, N, FROM, TO);
});
afterAll(() => py.close());

function json(...args: string[]): { report: Report; stderr: string } {
  const r = runCli('analyze', ...args, '--json');
  expect(r.status, r.stderr).toBe(0);
  return { report: JSON.parse(r.stdout) as Report, stderr: r.stderr };
}

describe('analyze that survives a clip', () => {
  it('counts the clipped samples and warns, naming how many, where, and the flags', () => {
    const { report, stderr } = json(clipPath, '--segment', String(N));
    expect(report.channels.map((c) => c.clippedSamples)).toEqual(ref.clipped); // numpy: sum(|x| ≥ 0.999)
    expect(ref.clipped[0]).toBeGreaterThan(100);
    expect(stderr).toContain(`ch0: ${ref.clipped[0]} clipped sample(s)`);
    expect(stderr).toContain(`samples ${ref.first}–${ref.last}`); // numpy argmax of the clip mask from both ends
    expect(stderr).toContain('--exclude-clipped');
    expect(stderr).not.toContain('ch1:');
  });

  it('--exclude-clipped: the mean of the segments that touch no clipped sample, as scipy.signal.spectrogram gives them', () => {
    expect(ref.welchCheck).toBeLessThan(1e-12); // scipy.signal.welch is the mean of scipy.signal.spectrogram's columns
    const { report, stderr } = json(clipPath, '--segment', String(N), '--exclude-clipped');
    expect(report.settings.excludedSegments).toBe(ref.excluded);
    expect(ref.excluded).toBeGreaterThan(0);
    expect(report.settings.averages).toBe(ref.segments - ref.excluded);
    // Welch 1967: K / (1 + 2 Σ (1 − j/K) ρ_j), in numpy with scipy.signal.get_window('hann').
    expect(Math.abs(report.settings.equivalentAverages - ref.keqExcluded) / ref.keqExcluded).toBeLessThan(1e-12);
    for (let c = 0; c < 2; c++) expect(worstRel(report.channels[c].psd, ref.psdExcluded[c])).toBeLessThan(1e-9);
    expect(stderr).toContain('were left out');
  });

  it('--from/--to analyse only the span, equal to scipy.signal.welch on x[a:b]', () => {
    const { report } = json(clipPath, '--segment', String(N), '--from', String(FROM / RATE), '--to', String(TO / RATE));
    expect(report.samples).toBe(TO - FROM);
    expect(report.settings.span).toMatchObject({ firstSample: FROM, endSample: TO });
    for (let c = 0; c < 2; c++) expect(worstRel(report.channels[c].psd, ref.psdSpan[c])).toBeLessThan(1e-9);
  });

  it('--average median equals scipy.signal.welch(average="median"), bias-corrected the same way', () => {
    const { report } = json(
      clipPath,
      '--segment',
      String(N),
      '--from',
      String(FROM / RATE),
      '--to',
      String(TO / RATE),
      '--average',
      'median',
    );
    expect(report.settings.average).toBe('median');
    for (let c = 0; c < 2; c++) expect(worstRel(report.channels[c].psd, ref.psdMedian[c])).toBeLessThan(1e-9);
  });

  it('takes ISO-8601 wall times for --from/--to when the metadata has a start, the same span as seconds', () => {
    const stamped = join(dir, 'stamped.wav');
    copyFileSync(clipPath, stamped);
    writeFileSync(
      `${stamped}.json`,
      JSON.stringify({
        schema: 'floorline.recording/1',
        sampleRate: RATE,
        firstSample: 0,
        startWallTime: '2026-12-02T10:00:00.000Z',
        channels: [
          { name: 'a', unit: 'FS' },
          { name: 'b', unit: 'FS' },
        ],
      }),
    );
    const iso = json(
      stamped,
      '--segment',
      String(N),
      '--from',
      '2026-12-02T10:00:01Z',
      '--to',
      '2026-12-02T10:00:09Z',
    ).report;
    expect(iso.settings.span).toMatchObject({ firstSample: FROM, endSample: TO });
    for (let c = 0; c < 2; c++) expect(worstRel(iso.channels[c].psd, ref.psdSpan[c])).toBeLessThan(1e-9); // scipy.signal.welch on x[a:b]
    const none = runCli('analyze', clipPath, '--from', '2026-12-02T10:00:01Z');
    expect(none.status).toBe(2);
    expect(none.stderr).toMatch(/has no start wall time in its metadata; give seconds of sample time instead/);
  });

  it('refuses a span outside the file and an unknown averaging, naming the fix', () => {
    const r = runCli('analyze', clipPath, '--from', '20');
    expect(r.status).toBe(2);
    expect(r.stderr).toMatch(/--from 20: outside the recording; .* holds t = 0\.000–13\.107 s/);
    const m = runCli('analyze', clipPath, '--average', 'mode');
    expect(m.status).toBe(2);
    expect(m.stderr).toMatch(/--average/);
  });

  it('prints the equivalent averages and the χ² interval of the floor density in the text report', () => {
    const r = runCli('analyze', clipPath, '--segment', String(N), '--exclude-clipped');
    expect(r.status).toBe(0);
    const m = /([0-9.]+) equivalent averages, 95 % interval of a bin's density (-[0-9.]+) \/ \+([0-9.]+) dB/.exec(
      r.stdout,
    );
    expect(m, r.stdout).not.toBeNull();
    expect(Number(m![1])).toBeCloseTo(ref.keqExcluded, 0);
    // scipy.stats.chi2.ppf(0.975 / 0.025, ν = 2·K_eq): the interval of a density estimate (printed to 2 decimals).
    expect(Number(m![2])).toBeCloseTo(ref.ciDb[0], 2);
    expect(Number(m![3])).toBeCloseTo(ref.ciDb[1], 2);
    expect(r.stdout).toMatch(/floor density \(median ASD\) +[0-9.]+ [µmn]?FS\/√Hz \(95 % interval of a bin: /);
    expect(r.stdout).toMatch(/band [0-9.]+–100 Hz RMS[^\n]*\n  band 100–1000 Hz RMS/); // default decade bands without --band
  });

  it('`--csv | head` ends quietly (no EPIPE crash) with exit 0', () => {
    // 2^17 samples at segment 65536: 32769 rows, far more than a pipe buffer, so the writer meets a closed pipe.
    const bin = join(root, 'bin/floorline.mjs');
    const r = spawnSync(
      'bash',
      [
        '-c',
        `set -o pipefail; "${process.execPath}" "${bin}" analyze "${clipPath}" --segment 65536 --csv 2>"${dir}/err.txt" | head -n 3 >/dev/null; echo "status \${PIPESTATUS[0]}"; cat "${dir}/err.txt"`,
      ],
      { encoding: 'utf8' },
    );
    expect(r.stdout).toMatch(/^status 0\n/);
    expect(r.stdout).not.toMatch(/EPIPE|Error|\n\s+at /);
  });
});

describe('the demo recording', () => {
  it('with --exclude-clipped gives the bridge floor within 5 % of the scripted one; without it warns', () => {
    const demo = join(root, 'recordings/demo.wav');
    const plain = runCli('analyze', demo, '--json');
    expect(plain.stderr).toMatch(/bridge: \d+ clipped sample\(s\) at t = 52\.\d+–52\.\d+ s/);
    const { report } = json(demo, '--exclude-clipped');
    const asd = report.channels[0].asd.slice(1).sort((a, b) => a - b);
    const floor = asd[Math.floor(asd.length / 2)];
    // The scenario scripts the bridge's white floor at the converter (recordings/demo-scenario.json, README table):
    // bridge 239.2, amplifier 600 and 7, board 15 nV/√Hz in quadrature = 646 nV/√Hz.
    const scripted = Math.sqrt(239.2e-9 ** 2 + 600e-9 ** 2 + 7e-9 ** 2 + 15e-9 ** 2);
    expect(Math.abs(floor / scripted - 1)).toBeLessThan(0.05);
  });
});
