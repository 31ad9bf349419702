// The history store's trend rows against scipy.signal.welch over exactly the Welch segments that end inside each
// row's interval, read back through `floorline trend` and through python's sqlite3 on the real file.
import { spawnSync } from 'node:child_process';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { Python, root, tempDir } from '../wav/support.ts';

const RATE = 4000;
const SECONDS = 150; // two whole minutes and a part of a third
const SEGMENT = 1024;
let dir: string;
let py: Python;
let wav: string;
let store: string;

function floorline(...args: string[]) {
  return spawnSync(process.execPath, [join(root, 'bin/floorline.mjs'), ...args], {
    encoding: 'utf8',
    cwd: dir,
    timeout: 120_000,
  });
}

interface Row {
  t: number;
  sample: number;
  wallTime: string;
  min: number | null;
  mean: number | null;
  max: number | null;
  gap: boolean;
}
interface Series {
  channel: string;
  quantity: string;
  band: [number, number] | null;
  unit: string;
  rows: Row[];
}

beforeAll(async () => {
  dir = tempDir('store-trend');
  py = new Python();
  wav = join(dir, 'rig.wav');
  store = join(dir, 'rig.sqlite');
  // Invented test data: white noise, a 300 Hz line that steps up at 70 s, on two channels (float32 WAV by scipy).
  await py.run(
    `rng = np.random.default_rng(7)
n, fs = args[0], args[1]
t = np.arange(n) / fs
a = 1e-3 * rng.standard_normal(n) + np.where(t >= 70, 4e-3, 1e-3) * np.sin(2 * np.pi * 300 * t)
b = 5e-4 * rng.standard_normal(n)
wavfile.write(args[2], fs, np.stack([a, b], axis=1).astype(np.float32))`,
    SECONDS * RATE,
    RATE,
    wav,
  );
  const r = floorline(
    'replay',
    wav,
    '--speed',
    'max',
    '--no-server',
    '--quiet',
    '--segment',
    String(SEGMENT),
    '--band',
    '100:400',
    '--band',
    '20:1900',
    '--data',
    join(dir, 'data'),
    '--store',
    store,
  );
  expect(r.status, r.stderr).toBe(0);
}, 120_000);

afterAll(() => py.close());

// Per-row reference: scipy.signal.welch on x[first segment start : last segment end] with the same settings yields
// the mean of exactly those periodograms; scipy.signal.spectrogram (same conventions) gives each one for min/max.
const REFERENCE = `
fs, x = wavfile.read(args[0])
x = x.astype(np.float64)
seg, step, length, lo, hi = args[1], args[1] // 2, args[2], args[3], args[4]
out = []
for ch in range(x.shape[1]):
    rows = []
    for k in range(int(np.ceil(len(x) / length))):
        # segments start at multiples of step; one ends (start + seg - 1) inside [k·length, (k+1)·length)
        starts = [s for s in range(0, len(x) - seg + 1, step) if k * length <= s + seg - 1 < (k + 1) * length]
        if not starts:
            continue
        part = x[starts[0]: starts[-1] + seg, ch]
        f, p = signal.welch(part, fs, window='hann', nperseg=seg, noverlap=seg - step, detrend='constant', scaling='density', average='mean')
        m = (f >= lo) & (f <= hi)
        df = f[1] - f[0]
        f2, t2, s = signal.spectrogram(part, fs, window='hann', nperseg=seg, noverlap=seg - step, detrend='constant', scaling='density', mode='psd')
        seg_rms = np.sqrt(np.sum(s[m, :], axis=0) * df)
        rows.append({"k": k, "n": len(starts), "mean": float(np.sqrt(np.sum(p[m]) * df)), "min": float(seg_rms.min()), "max": float(seg_rms.max())})
    out.append(rows)
result = out
`;

describe('history store trend rows', () => {
  it('floorline trend --every 1m equals scipy.signal.welch over exactly the segments ending in each minute (1e-9 relative)', async () => {
    const r = floorline('trend', '--store', store, '--band', '100:400', '--every', '1m', '--json');
    expect(r.status, r.stderr).toBe(0);
    const out = JSON.parse(r.stdout) as { every: string; series: Series[] };
    expect(out.every).toBe('1m');
    const bands = out.series.filter((s) => s.quantity === 'bandRms');
    expect(bands.map((s) => s.channel)).toEqual(['ch0', 'ch1']);
    const ref = await py.run<{ k: number; n: number; mean: number; min: number; max: number }[][]>(
      REFERENCE,
      wav,
      SEGMENT,
      60 * RATE,
      100,
      400,
    );
    bands.forEach((s, ch) => {
      expect(s.band).toEqual([100, 400]);
      expect(s.unit).toBe('FS'); // an unlabelled float WAV is in full-scale units
      const data = s.rows.filter((x) => !x.gap);
      expect(data.length).toBe(3);
      expect(data.length).toBe(ref[ch].length);
      data.forEach((row, i) => {
        const want = ref[ch][i];
        expect(row.sample).toBe(want.k * 60 * RATE);
        expect(row.t).toBe(want.k * 60);
        for (const key of ['mean', 'min', 'max'] as const)
          expect(Math.abs(row[key]! / want[key] - 1)).toBeLessThan(1e-9);
      });
    });
    // The step at 70 s: the second minute's mean on ch0 is well above the first (scripted ×4 line amplitude).
    expect(bands[0].rows[1].mean! / bands[0].rows[0].mean!).toBeGreaterThan(1.5);
  });

  it('the 1 s rows equal scipy too, and python sqlite3 reads the file: n per row is the segment count', async () => {
    const r = floorline('trend', '--store', store, '--channel', 'ch1', '--band', '20:1900', '--every', '1s', '--json');
    expect(r.status, r.stderr).toBe(0);
    const rows = (JSON.parse(r.stdout) as { series: Series[] }).series.find((s) => s.quantity === 'bandRms')!.rows;
    const ref = await py.run<{ k: number; n: number; mean: number; min: number; max: number }[][]>(
      REFERENCE,
      wav,
      SEGMENT,
      RATE,
      20,
      1900,
    );
    const byK = new Map(ref[1].map((x) => [x.k, x]));
    expect(rows.length).toBe(ref[1].length);
    for (const row of rows) {
      const want = byK.get(row.sample / RATE)!;
      expect(Math.abs(row.mean! / want.mean - 1)).toBeLessThan(1e-9);
    }
    // python's sqlite3 on the file: the documented tables, n = segments ending in the minute (scipy count above).
    const counts = await py.run<number[]>(
      `import sqlite3
db = sqlite3.connect(args[0])
assert db.execute('pragma integrity_check').fetchone()[0] == 'ok'
sid = db.execute("select id from series where channel='ch0' and quantity='bandRms' and band_low=100 and band_high=400").fetchone()[0]
result = [r[0] for r in db.execute('select n from trend_1m where series=? order by k', (sid,))]`,
      store,
    );
    const ref1m = await py.run<{ n: number }[][]>(REFERENCE, wav, SEGMENT, 60 * RATE, 100, 400);
    expect(counts).toEqual(ref1m[0].map((x) => x.n));
  });

  it('CSV has units in the header and reads with numpy.genfromtxt (comma, names) and the csv module', async () => {
    const r = floorline('trend', '--store', store, '--band', '100:400', '--every', '1m', '--csv');
    expect(r.status, r.stderr).toBe(0);
    const header = r.stdout.split('\n')[0];
    expect(header).toBe(
      'channel,band_low_Hz,band_high_Hz,t_s,sample,wall_time,rms_min_FS,rms_mean_FS,rms_max_FS,floor_density_FS_per_rtHz,gap',
    );
    const parsed = await py.run<{ names: string[]; mean: number[]; csvRows: number }>(
      `import io, csv
a = np.genfromtxt(io.StringIO(args[0]), delimiter=',', names=True, dtype=None, encoding='utf-8')
rows = list(csv.DictReader(io.StringIO(args[0])))
result = {"names": list(a.dtype.names), "mean": [float(v) for v in a['rms_mean_FS']], "csvRows": len(rows)}`,
      r.stdout,
    );
    expect(parsed.names).toContain('rms_mean_FS');
    expect(parsed.names).toContain('floor_density_FS_per_rtHz');
    expect(parsed.csvRows).toBe(6); // 2 channels × 3 minutes
    const json = JSON.parse(
      floorline('trend', '--store', store, '--band', '100:400', '--every', '1m', '--json').stdout,
    ) as { series: Series[] };
    const means = json.series.filter((s) => s.quantity === 'bandRms').flatMap((s) => s.rows.map((x) => x.mean));
    expect(parsed.mean).toEqual(means);
  });
});
