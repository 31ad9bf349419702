// A baseline captured in the middle of a run is in force from then on, and the report says so: the store keeps the
// change (meta run:ID:baseline:SAMPLE, read back with python's sqlite3, its SHA-256 from python's hashlib), the
// header lists it, the summary's baseline figure is the band RMS of the new file (numpy on its density), and the
// baseline in force before the change is still the one the run started with.
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { Python, root, tempDir } from '../wav/support.ts';
import { startMonitor } from '../../agent/monitor/monitor.ts';
import { ReplaySource } from '../../agent/sources/replay.ts';
import { readBaseline } from '../../agent/baseline/format.ts';
import { openStoreForReading } from '../../agent/store/open-store.ts';
import { collectReport, type ReportData } from '../../agent/report/collect.ts';
import { baselineAt, bandKey, computeFigures, type ReportFigures } from '../../agent/report/figures.ts';
import { renderReport } from '../../agent/report/render.ts';
import { numpyBandRms } from './numpy-band-rms.ts';
import { testMonitorOptions } from '../support/monitor-options.ts';

const demoBaseline = join(root, 'recordings/demo-baseline.json');
let dir: string;
let store: string;
let py: Python;
let data: ReportData;
let figures: ReportFigures;
let captured: string;

beforeAll(async () => {
  dir = tempDir('report-baseline-change');
  store = join(dir, 'floorline.sqlite');
  py = new Python();
  const src = new ReplaySource(join(root, 'recordings/demo.wav'), { speed: 'max' });
  const m = await startMonitor(
    src,
    testMonitorOptions(dir, {
      baseline: { baseline: await readBaseline(demoBaseline), where: demoBaseline },
      history: { path: store, source: 'demo' },
      lowFrequency: false,
    }),
  );
  const { file } = await m.captureBaseline({ seconds: 3, name: 'mid-run.json', notes: 'taken mid-run' });
  captured = join(dir, file);
  await src.stop();
  await m.finished;
  const db = openStoreForReading(store);
  try {
    data = collectReport(db);
  } finally {
    db.close();
  }
  figures = await computeFigures(data, {});
}, 120_000);

afterAll(() => py?.close());

describe('a baseline captured mid-run', () => {
  it('is kept by the store with its sample, path and hash', async () => {
    const kept = await py.run<{ key: string; value: { path: string; sha256: string } }[]>(
      `import sqlite3, json
db = sqlite3.connect(args[0])
result = [{"key": k, "value": json.loads(v)} for k, v in db.execute("select key, value from meta where key like 'run:%:baseline:%'")]`,
      store,
    );
    expect(kept.length).toBe(1);
    expect(kept[0].key).toMatch(/^run:1:baseline:\d+$/);
    expect(kept[0].value.path).toBe(captured);
    const sha = await py.run<string>(
      `import hashlib\nresult = hashlib.sha256(open(args[0], 'rb').read()).hexdigest()`,
      captured,
    );
    expect(kept[0].value.sha256).toBe(sha);
    // The run's context still names the baseline it started with.
    expect(data.runs[0].context?.baseline?.path).toBe(demoBaseline);
    expect(data.baselineChanges.map((c) => c.baseline?.path)).toEqual([captured]);
  });

  it('the report lists the change and judges the summary against the baseline in force at the end', async () => {
    const html = renderReport(data, figures, { generatedAt: 'now', version: 'v', commit: 'c', link: (c) => c });
    expect(html).toContain('<th>baseline changes</th>');
    expect(html).toContain(`${captured}, SHA-256 `);
    const change = data.baselineChanges[0];
    const before = baselineAt(figures.baselineTimeline, Date.parse(change.wallTime) - 1);
    const after = baselineAt(figures.baselineTimeline, Date.parse(change.wallTime));
    expect(before?.ref?.path).toBe(demoBaseline);
    expect(after?.ref?.path).toBe(captured);
    const bands = data.series.filter((s) => s.quantity === 'bandRms').map((s) => [s.channel, ...s.band!]);
    const bandRms = (file: string) => numpyBandRms(py, file, bands);
    const ref = await bandRms(captured);
    bands.forEach(([ch, lo, hi], n) =>
      expect(figures.baselineBandRms.get(bandKey(ch as string, [lo as number, hi as number]))).toBeCloseTo(ref[n], 15),
    );
    // The figures differ from the baseline the run started with (another span of the signal).
    const first = await bandRms(demoBaseline);
    expect(first.some((v, n) => Math.abs(v - ref[n]) > 1e-3 * v)).toBe(true);
  });
});
