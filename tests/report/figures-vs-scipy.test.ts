// The report's computed figures on the demo replayed into a store, against outside references:
// - each incident's spectrum against scipy.signal.welch on the same samples of its capture WAV (read by
//   scipy.io.wavfile), the samples ending at the settled sample python's sqlite3 reads from the store's events;
// - the baseline figure per band against numpy on the baseline file's density;
// - the mask verdicts against numpy: log-log interpolation of the mask, the loudest segment band RMS read with
//   python's sqlite3 from the trend table, and the worst bin of the scipy spectra.
import { readFileSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { Python, root, tempDir } from '../wav/support.ts';
import { numpyBandRms } from './numpy-band-rms.ts';
import { cliIn, replayDemoIntoStore } from '../store/support.ts';
import { openStoreForReading } from '../../agent/store/open-store.ts';
import { collectReport, type ReportData } from '../../agent/report/collect.ts';
import { bandKey, computeFigures, type ReportFigures } from '../../agent/report/figures.ts';

let dir: string;
let store: string;
let py: Python;
let data: ReportData;
let figures: ReportFigures;
const floorline = cliIn(() => dir);
const MASK = [
  // A sloped ASD limit, V/√Hz: it passes the shorted channel everywhere and fails the bridge's mains lines.
  'frequency,limit,unit',
  '2,20,uV/√Hz',
  '4000,2,uV/√Hz',
].join('\n');

beforeAll(async () => {
  dir = tempDir('report-figures');
  store = replayDemoIntoStore(dir);
  py = new Python();
  writeFileSync(join(dir, 'mask.csv'), MASK + '\n');
  const db = openStoreForReading(store);
  try {
    data = collectReport(db);
  } finally {
    db.close();
  }
  figures = await computeFigures(data, { maskPath: join(dir, 'mask.csv') });
}, 120_000);

afterAll(() => py?.close());

/** scipy.signal.welch of one channel of a WAV over absolute samples [from, to), with the demo run's settings. */
function scipyWelch(wav: string, channel: string, from: number, to: number) {
  return py.run<{ psd: number[]; segments: number }>(
    `import json as j
meta = j.load(open(args[0] + '.json'))
names = [c['name'] for c in meta['channels']]
fs, x = wavfile.read(args[0])
x = x[:, names.index(args[1])].astype(np.float64)
seg = x[args[2] - meta['firstSample']:args[3] - meta['firstSample']]
f, p = signal.welch(seg, fs, window='hann', nperseg=4096, noverlap=2048, detrend='constant', scaling='density')
result = {'psd': p.tolist(), 'segments': (len(seg) - 4096) // 2048 + 1}`,
    wav,
    channel,
    from,
    to,
  );
}

describe('report figures against scipy and numpy', () => {
  it('each incident spectrum is scipy.signal.welch of its capture up to the settled sample', async () => {
    expect(data.incidents.length).toBe(4);
    const settledSamples = await py.run<Record<string, number | null>>(
      `import sqlite3
db = sqlite3.connect(args[0])
result = dict(db.execute("select incident, min(case when state = 'settled' then sample end) from events where kind = 'alarm' group by incident").fetchall())`,
      store,
    );
    for (const i of data.incidents) {
      const sp = figures.spectra.get(i.id);
      if (typeof sp !== 'object') throw new Error(`${i.id}: ${sp}`);
      // The spectrum ends at the settled sample (the clip incident has none: its end stands in).
      const settled = settledSamples[i.id];
      expect(sp.to - 1).toBe(settled ?? i.end!.sample);
      expect(sp.from).toBe(Math.min(i.start.sample, sp.to - 4096));
      const ref = await scipyWelch(join(dir, 'data', i.capture!), i.channel, sp.from, sp.to);
      expect(sp.segments).toBe(ref.segments);
      expect(sp.psd.length).toBe(ref.psd.length);
      let worst = 0;
      const peak = Math.max(...ref.psd);
      for (let k = 0; k < ref.psd.length; k++)
        worst = Math.max(worst, Math.abs(sp.psd[k] - ref.psd[k]) / Math.max(ref.psd[k], 1e-12 * peak));
      // float32 samples, float64 arithmetic on both sides: agreement to rounding.
      expect(worst, i.id).toBeLessThan(1e-9);
    }
  });

  it('the baseline figure of each band is the band RMS of the baseline file density (numpy)', async () => {
    const bands = data.series.filter((s) => s.quantity === 'bandRms').map((s) => [s.channel, ...s.band!]);
    expect(bands.length).toBe(8);
    const ref = await numpyBandRms(py, join(root, 'recordings/demo-baseline.json'), bands);
    bands.forEach(([ch, lo, hi], n) =>
      expect(figures.baselineBandRms.get(bandKey(ch as string, [lo as number, hi as number]))).toBeCloseTo(ref[n], 15),
    );
  });

  it('judges each band against the mask as numpy does, with the worst bin of the incident spectra', async () => {
    const series = data.series.filter((s) => s.quantity === 'bandRms');
    const ref = await py.run<{ band: number; bin: [number, number, string] | null }[]>(
      `import sqlite3
db = sqlite3.connect(args[0])
fm, lm = np.array([2.0, 4000.0]), np.array([20e-6, 2e-6])
fs, n = 8000, 4096
f = np.arange(n // 2 + 1) * fs / n
lim = np.exp(np.interp(np.log(np.maximum(f, 1e-300)), np.log(fm), np.log(lm)))
lim[(f < fm[0]) | (f > fm[-1])] = np.nan
out = []
for ch, lo, hi, spectra in args[1]:
    loudest, = db.execute("""select max(t.max) from trend_1s t join series s on s.id = t.series
        where s.channel = ? and s.quantity = 'bandRms' and s.band_low = ? and s.band_high = ?""", (ch, lo, hi)).fetchone()
    k = np.nonzero((f >= lo) & (f <= hi) & (np.arange(len(f)) >= 1))[0]
    band = 20 * np.log10(np.sqrt(np.sum(lim[k] ** 2) * fs / n) / loudest)
    bin = None
    for inc, psd in spectra:
        m = 20 * np.log10(lim[k] / np.sqrt(np.array(psd)[k]))
        j = int(np.argmin(m))
        if bin is None or m[j] < bin[0]:
            bin = [float(m[j]), float(f[k[j]]), inc]
    out.append({'band': float(band), 'bin': bin})
result = out`,
      store,
      await Promise.all(
        series.map(async (s) => [
          s.channel,
          s.band![0],
          s.band![1],
          await Promise.all(
            data.incidents
              .filter((i) => i.channel === s.channel)
              .map(async (i) => {
                const sp = figures.spectra.get(i.id) as { from: number; to: number };
                return [i.id, (await scipyWelch(join(dir, 'data', i.capture!), i.channel, sp.from, sp.to)).psd];
              }),
          ),
        ]),
      ),
    );
    series.forEach((s, n) => {
      const v = figures.maskVerdicts.get(bandKey(s.channel, s.band!));
      if (typeof v !== 'object') throw new Error(`${s.channel} ${s.band}: ${v}`);
      expect(v.bandMarginDb).toBeCloseTo(ref[n].band, 9);
      expect(v.worstBin?.frequency).toBe(ref[n].bin![1]);
      expect(v.worstBin?.incident).toBe(ref[n].bin![2]);
      expect(v.worstBin!.marginDb).toBeCloseTo(ref[n].bin![0], 6);
      expect(v.pass).toBe(ref[n].band >= 0 && ref[n].bin![0] >= 0);
    });
    // The demo's scripted faults: the bridge's mains lines and clip fail the mask, the shorted channel passes.
    expect(
      series
        .filter((s) => s.channel === 'shorted')
        .every((s) => (figures.maskVerdicts.get(bandKey(s.channel, s.band!)) as { pass: boolean }).pass),
    ).toBe(true);
    expect(
      series
        .filter((s) => s.channel === 'bridge')
        .some((s) => !(figures.maskVerdicts.get(bandKey(s.channel, s.band!)) as { pass: boolean }).pass),
    ).toBe(true);
  });

  it('the command writes the verdicts, states the mask in the header and exits 3 on fail', () => {
    const r = floorline('report', '--store', store, '--mask', 'mask.csv', '-o', 'masked.html');
    expect(r.status, r.stderr).toBe(3);
    expect(r.stdout).toContain('mask   fail');
    const html = readFileSync(join(dir, 'masked.html'), 'utf8');
    expect(html).toContain('<th>mask</th>');
    expect(html).toMatch(/<td class="fail">fail: band RMS −\d/);
    expect(html).toMatch(/<td class="pass">pass: band RMS \+\d/);
    expect(html).toContain('Limit mask: the limit is interpolated log-log');
  });

  it('refuses a mask in another unit, naming the file and the fix', () => {
    writeFileSync(join(dir, 'amps.csv'), 'frequency,limit,unit\n2,1,nA/√Hz\n4000,1,nA/√Hz\n');
    const r = floorline('report', '--store', store, '--mask', 'amps.csv', '-o', 'amps.html');
    expect(r.status).toBe(2);
    expect(r.stderr).toMatch(
      /--mask amps\.csv: its limits are in A\/√Hz but channel bridge is in V\/√Hz; give a mask in V\/√Hz/,
    );
  });
});
