import { execFileSync } from 'node:child_process';
import { readFileSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { createProgress } from '../../agent/cli/progress.ts';
import { formatSi } from '../../protocol/si.ts';
import { defaultSegment, segmentCount } from '../../agent/analysis/segment-choice.ts';
import { Python, root, tempDir } from '../wav/support.ts';
import { runCli, welchReference } from './support.ts';

let py: Python;
let dir: string;
let fx: string;

beforeAll(async () => {
  py = new Python();
  dir = tempDir('analyze-out');
  fx = join(dir, 'fx');
  // Encodings and refusals from the fixture script (each checked there against scipy.io.wavfile.read).
  execFileSync('python3', [join(root, 'tests/fixtures/make_wav_fixtures.py'), fx]);
  // Short files written by scipy.io.wavfile.write.
  await py.run(
    `wavfile.write(args[0] + "/short.wav", 8000, np.zeros(100, dtype=np.int16))
wavfile.write(args[0] + "/tiny.wav", 8000, np.zeros(50, dtype=np.int16))
result = True`,
    dir,
  );
});
afterAll(() => py.close());

describe('floorline analyze --csv and text', () => {
  it('writes CSV whose columns python.csv reads back equal to scipy.signal.welch', async () => {
    const path = join(fx, 'float32_3ch.wav');
    const r = runCli('analyze', path, '--segment', '512', '--csv', '--band', '50:5000');
    expect(r.status).toBe(0);
    const lines = r.stdout.trimEnd().split('\n');
    const comments = lines.filter((l) => l.startsWith('#'));
    expect(comments.join('\n')).toMatch(/segment: 512; window: hann; overlap: 0.5; detrend: mean; averages: 18/);
    expect(comments.join('\n')).toMatch(/binHz: 39.0625; nenbw: 1.500000\d* bins/); // 20000 Hz / 512; Hann NENBW 1.5 (Heinzel 2002)
    const body = lines.filter((l) => !l.startsWith('#'));
    expect(body[0]).toBe('frequency,ch0 psd,ch0 asd,ch1 psd,ch1 asd,ch2 psd,ch2 asd');
    expect(body[1]).toBe('Hz,FS²/Hz,FS/√Hz,FS²/Hz,FS/√Hz,FS²/Hz,FS/√Hz');
    const csvPath = join(dir, 'out.csv');
    writeFileSync(csvPath, r.stdout);
    // Reference: python's csv module parses the rows (skipping '#' lines, header, units); scipy.signal.welch on
    // scipy.io.wavfile.read's samples gives the expected psd; averages = len(scipy.signal.spectrogram(...)[1]) = 18.
    const ref = await welchReference(py, path, {
      segment: 512,
      scipyWindow: 'hann',
      overlap: 0.5,
      detrend: 'constant',
      bands: [],
    });
    expect(ref.averages).toBe(18);
    const worst = await py.run<number>(
      `import csv
rows = [r for r in csv.reader(open(args[0], encoding="utf-8")) if r and not r[0].startswith("#")][2:]
a = np.array(rows, dtype=float)
ref = np.array(args[1]).T
ok = np.allclose(a[:, 0], args[2])
result = float(np.max(np.abs(a[:, 1::2] - ref) / ref)) if ok else -1.0`,
      csvPath,
      ref.psd,
      ref.f,
    );
    expect(worst).toBeGreaterThanOrEqual(0);
    expect(worst).toBeLessThan(1e-6);
  });

  it('prints a text summary with total and band RMS in SI prefixes equal to numpy to 3 digits', async () => {
    const path = join(fx, 'float64_mono.wav');
    const r = runCli('analyze', path, '--segment', '256', '--band', '100:1000', '--scale', '10');
    expect(r.status).toBe(0);
    const ref = await welchReference(py, path, {
      segment: 256,
      scipyWindow: 'hann',
      overlap: 0.5,
      detrend: 'constant',
      bands: [[100, 1000]],
      scale: 10,
    });
    const prefix: Record<string, number> = { m: 1e-3, µ: 1e-6, n: 1e-9, p: 1e-12, '': 1 };
    const value = (label: RegExp): number => {
      const m = r.stdout.match(new RegExp(label.source + String.raw`\s+(-?[\d.]+) ([mµnp]?)V`));
      expect(m, label.source).not.toBeNull();
      return Number(m![1]) * prefix[m![2]];
    };
    // Reference: numpy sqrt(Σ psd[1:]·Δf) and the band rule on scipy.signal.welch (3 significant digits shown).
    expect(Math.abs(value(/total RMS \(DC excluded\)/) / ref.rms[0] - 1)).toBeLessThan(5e-3);
    expect(Math.abs(value(/band 100–1000 Hz RMS/) / ref.bands[0][0] - 1)).toBeLessThan(5e-3);
    expect(r.stdout).toMatch(/floor density \(median ASD\)\s+[\d.]+ [mµnp]?V\/√Hz/);
    expect(r.stdout).toMatch(
      new RegExp(`segment 256 .*window hann .*overlap 0.5, detrend mean\naveraging: mean of ${ref.averages} segments`),
    );
  });

  it('warns on stderr about a truncated file and still reports it', () => {
    const src = readFileSync(join(fx, 'float32_3ch.wav'));
    const cut = join(dir, 'cut.wav');
    writeFileSync(cut, src.subarray(0, src.length - 1000 * 12 - 5));
    const r = runCli('analyze', cut, '--json', '--segment', '256');
    expect(r.status).toBe(0);
    expect(r.stderr).toMatch(/warning: .*truncated.*last whole frame/);
    // 5000 frames written by scipy.io.wavfile.write, 1000 and 5 bytes of one more cut off.
    expect(JSON.parse(r.stdout).samples).toBe(3999);
  });
});

describe('floorline analyze errors', () => {
  const cases: [string, string[], RegExp][] = [
    ['a non-WAV file', ['fx/bad_not_wav.wav'], /is not a WAV file.*give a RIFF\/WAVE or RF64/],
    ['8-bit PCM', ['fx/bad_uint8.wav'], /8-bit PCM is not supported.*convert it to 16\/24\/32-bit PCM/],
    ['A-law', ['fx/bad_alaw.wav'], /A-law.*not supported.*convert/],
    ['12-bit PCM', ['fx/bad_12bit.wav'], /12-bit PCM is not supported/],
    ['a missing file', ['nope.wav'], /nope\.wav: no such file or folder; check the path/],
    [
      'a file shorter than the segment',
      ['short.wav', '--segment', '4096'],
      /short\.wav has 100 frames, shorter than one segment of 4096; give a smaller --segment/,
    ],
    [
      'a file shorter than the minimum segment',
      ['tiny.wav'],
      /tiny\.wav has 50 frames, shorter than one segment of 64; analyze a recording of at least 64/,
    ],
    [
      'a segment that is not a power of two',
      ['short.wav', '--segment', '1000'],
      /--segment 1000 is not a power of two; give e.g. --segment 1024/,
    ],
    ['an unknown window', ['short.wav', '--window', 'hanning'], /unknown window "hanning": choose one of rect, hann/],
    [
      'an unknown detrend',
      ['short.wav', '--detrend', 'quadratic'],
      /--detrend 'quadratic' is not one of none, mean, linear/,
    ],
    [
      'an overlap out of range',
      ['short.wav', '--overlap', '1'],
      /--overlap 1 is out of range; give a number from 0 to 0.95/,
    ],
    [
      'a scale that is not positive',
      ['short.wav', '--scale', '0'],
      /--scale 0 must be a positive number of volts per full scale/,
    ],
    ['--json with --csv', ['short.wav', '--json', '--csv'], /--json and --csv exclude each other/],
    ['an unknown flag', ['short.wav', '--segmnet', '64'], /unknown flag --segmnet/],
    [
      'a band with LO ≥ HI',
      ['short.wav', '--band', '200:100'],
      /--band 200:100: LO must be below HI; write e\.g\. --band 100:200/,
    ],
    ['a band that is not LO:HI', ['short.wav', '--band', '20-200'], /--band '20-200' is not LO:HI in Hz/],
    [
      'a band above Nyquist',
      ['short.wav', '--segment', '64', '--band', '20:5000'],
      /--band 20:5000: HI is above the Nyquist frequency 4000 Hz of .*short\.wav; give HI ≤ 4000/,
    ],
    [
      '--scale on a calibrated recording',
      ['calibrated.wav', '--scale', '2'],
      /already calibrated in V by its metadata; drop --scale/,
    ],
  ];

  it.each(cases)('exits 2 naming the fix for %s', (_what, args, message) => {
    if (args[0] === 'calibrated.wav') {
      writeFileSync(
        join(dir, 'calibrated.wav.json'),
        JSON.stringify({
          schema: 'floorline.recording/1',
          sampleRate: 20000,
          channels: ['a', 'b', 'c'].map((name) => ({ name, unit: 'V' })),
          firstSample: 0,
        }),
      );
      writeFileSync(join(dir, 'calibrated.wav'), readFileSync(join(fx, 'float32_3ch.wav')));
    }
    const r = runCli('analyze', join(dir, args[0]), ...args.slice(1));
    expect(r.stdout).toBe('');
    expect(r.stderr).toMatch(message);
    expect(r.stderr).not.toMatch(/\n\s+at /); // no stack trace
    expect(r.status).toBe(2);
  });
});

describe('analysis helpers', () => {
  it('counts segments as scipy.signal.spectrogram does and picks the default segment by the documented rule', async () => {
    const grid: [number, number, number][] = [];
    for (const frames of [64, 100, 1000, 4096, 12000, 20000, 36863, 36864, 1e6])
      for (const overlap of [0, 0.5, 0.75, 0.9]) for (const n of [64, 512, 4096]) grid.push([frames, n, overlap]);
    // Reference: len(scipy.signal.spectrogram(zeros(frames), nperseg=n, noverlap=floor(overlap·n))[1]).
    const ref = await py.run<number[]>(
      `import math
result = [len(signal.spectrogram(np.zeros(int(f)), nperseg=n, noverlap=int(math.floor(o * n)))[1]) if f >= n else 0 for f, n, o in args[0]]`,
      grid,
    );
    expect(grid.map(([f, n, o]) => segmentCount(f, n, o))).toEqual(ref);
    // docs/ARCHITECTURE.md: 4096, or the largest power of two giving at least 8 averages.
    expect(defaultSegment(1e6, 0.5)).toBe(4096);
    expect(defaultSegment(36864, 0.5)).toBe(4096); // 17 segments
    expect(defaultSegment(18431, 0.5)).toBe(2048); // 4096 gives 7
    expect(defaultSegment(100, 0.5)).toBe(64); // even 64 gives 1; the largest that fits
    expect(defaultSegment(63, 0.5)).toBeUndefined();
  });

  it('formats values with SI prefixes (BIPM SI Brochure table 7)', () => {
    expect(formatSi(1.234e-7, 'V')).toBe('123 nV');
    expect(formatSi(9.9996e-7, 'V')).toBe('1.00 µV');
    expect(formatSi(0.5, 'V')).toBe('500 mV');
    expect(formatSi(4.2e-9, 'V/√Hz')).toBe('4.20 nV/√Hz');
    expect(formatSi(0, 'V')).toBe('0 V');
  });

  it('draws progress only on a terminal, redrawing once per permille', () => {
    const writes: string[] = [];
    const tty = { isTTY: true, columns: 80, write: (s: string) => writes.push(s) };
    const p = createProgress('analyze', tty);
    for (let i = 0; i <= 100000; i++) p.update(i, 100000);
    p.finish();
    expect(writes.length).toBe(1001 + 1); // permille 0..1000 and the clearing write
    expect(writes[1000]).toMatch(/100\.0%$/);
    const pipe = { isTTY: false, write: (s: string) => writes.push(s) };
    const q = createProgress('analyze', pipe);
    q.update(5, 10);
    q.finish();
    expect(writes.length).toBe(1002);
  });
});
