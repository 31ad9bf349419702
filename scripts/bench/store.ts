// History store costs. (1) Writing the trend at 16 channels × 8 bands with 10 snapshots/s: the sampler and writer
// fed as the pipeline feeds them (per-segment densities of 2049 bins at 20 kS/s, segment 4096, 50 % overlap, a
// floor median per snapshot, a commit every 0.5 s of sample time), CPU time per second of sample time. (2) Size:
// a store filled to the default retention of every level for 90 days, through the same writer, file bytes after a
// checkpoint. (3) A 7-day query at 1-min resolution of one band of one channel, median of 9. (4) `floorline report`
// of the last 7 days of that store as a process.
import { spawnSync } from 'node:child_process';
import { mkdtempSync, statSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { openStoreForWriting, openStoreForReading } from '../../agent/store/open-store.ts';
import { HistoryWriter } from '../../agent/store/history-writer.ts';
import { TrendSampler } from '../../agent/store/trend-sampler.ts';
import { DEFAULT_RETENTION, levelSamples } from '../../agent/store/levels.ts';
import { LEVELS } from '../../agent/store/schema.ts';
import { queryTrend } from '../../agent/store/trend-query.ts';
import type { SpectrumSnapshot } from '../../agent/pipeline/types.ts';
import { SeededRandom } from '../../dsp/random.ts';

const FS = 20000;
const SEGMENT = 4096;
const STEP = 2048;
const CH = 16;
const BANDS = Array.from({ length: 8 }, (_, i) => ({ low: 10 * 2 ** i, high: 10 * 2 ** (i + 1) }));
const SNAP = FS / 10;
const settings = { sampleRate: FS, segment: SEGMENT, window: 'hann', overlap: 0.5, detrend: 'mean' as const };
const dir = mkdtempSync(join(tmpdir(), 'floorline-bench-store-'));
const median = (xs: number[]): number => [...xs].sort((a, b) => a - b)[xs.length >> 1];
const warn = (m: string) => process.stderr.write(m + '\n');

// ---- (1) writing cost
function writingCost(seconds: number): number {
  const db = openStoreForWriting(join(dir, `write-${seconds}-${Math.random()}.sqlite`), warn);
  const writer = new HistoryWriter(db, { warn });
  const sampler = new TrendSampler(writer, {
    command: 'bench',
    source: 'bench',
    bands: BANDS,
    wallMsAt: (s) => 1.7e12 + (s / FS) * 1000,
  });
  const bins = SEGMENT / 2 + 1;
  const frequencies = Float64Array.from({ length: bins }, (_, k) => (k * FS) / SEGMENT);
  const channels = Array.from({ length: CH }, (_, i) => ({ name: `ch${i}`, unit: 'V' }));
  sampler.onAnalysis({ settings, frequencies, binHz: FS / SEGMENT, snapshotInterval: SNAP, channels, firstSample: 0 });
  const rng = new SeededRandom(2);
  const density = rng.fillGaussian(new Float64Array(bins), 1e-12).map((x) => x * x);
  const snap = {
    sample: 0,
    t: 0,
    wallTime: '',
    sequence: 0,
    settings,
    averaging: { mode: 'exponential', tauSeconds: 10 },
    frequencies,
    binHz: FS / SEGMENT,
    nenbw: 1.5,
    enbwHz: 7.3,
    channels: channels.map((c) => ({
      ...c,
      psd: density.slice(),
      segmentsUsed: 10,
      segmentsTotal: 10,
      equivalentAverages: 10,
      lastSegmentSample: 0,
    })),
  } as unknown as SpectrumSnapshot;
  const t0 = process.cpuUsage();
  let nextSeg = SEGMENT - 1;
  let nextCommit = FS / 2;
  for (let s = SNAP - 1; s < seconds * FS; s += SNAP) {
    for (; nextSeg <= s; nextSeg += STEP) for (let c = 0; c < CH; c++) sampler.onSegment(c, density, nextSeg);
    snap.sample = s;
    sampler.onSnapshot(snap);
    if (s >= nextCommit) {
      writer.flush(s); // one commit per 0.5 s of sample time, as the agent's timer does in real time
      nextCommit += FS / 2;
    }
  }
  sampler.finish();
  const used = process.cpuUsage(t0);
  writer.close();
  db.close();
  return (used.user + used.system) / 1e6 / seconds;
}

writingCost(30);
const costs = [0, 1, 2].map(() => writingCost(300));
process.stdout.write(
  `trend writing, ${CH} ch × ${BANDS.length} bands, 10 snapshots/s: ${(median(costs) * 100).toFixed(3)} % of one core ` +
    `(median of 3 × 300 s of sample time; runs ${costs.map((c) => (c * 100).toFixed(3)).join(', ')} %)\n`,
);

// ---- (2) size at the default retention after 90 days, and (3) the 7-day query
const path = join(dir, 'ninety-days.sqlite');
const db = openStoreForWriting(path, warn);
const writer = new HistoryWriter(db, { warn });
const lengths = levelSamples(FS, SNAP);
writer.beginRun({
  command: 'bench',
  source: 'bench',
  sampleRate: FS,
  firstSample: 0,
  startWallMs: 1.7e12,
  settings,
  levelSamples: lengths,
});
const series: number[] = [];
for (let c = 0; c < CH; c++)
  for (const b of BANDS) series.push(writer.seriesId(`ch${c}`, 'bandRms', [b.low, b.high], 'V'));
for (const q of ['floorDensity', 'mainsTotal', 'strongestLine'])
  for (let c = 0; c < CH; c++) series.push(writer.seriesId(`ch${c}`, q, null, 'V'));
const DAYS = 90;
const end = DAYS * 86400 * FS;
const rng = new SeededRandom(3);
let rows = 0;
for (const [li, level] of LEVELS.entries()) {
  const len = lengths[level];
  const kept = Math.min(DEFAULT_RETENTION[level], DAYS * 86400) * FS;
  for (let k = Math.floor((end - kept) / len); k < end / len; k++) {
    for (const s of series) {
      const v = 1e-6 * (1 + 0.1 * rng.gaussian());
      writer.rows.push(li, s, k, 20, v * v, 0.9 * v, 1.1 * v, k * len, (k + 1) * len - 1);
      rows++;
    }
    if (writer.rows.length > 200_000) writer.flush(0);
  }
}
writer.flush(0);
db.pragma('wal_checkpoint(TRUNCATE)');
writer.close();
db.close();
const bytes = statSync(path).size;
process.stdout.write(
  `store size at default retention (snap ${DEFAULT_RETENTION.snap / 60} min, 1 s ${DEFAULT_RETENTION['1s'] / 3600} h, 1 min ${DEFAULT_RETENTION['1m'] / 86400} d, ` +
    `1 h ${DEFAULT_RETENTION['1h'] / 86400} d) after ${DAYS} days, ${series.length} series (${CH} ch × ${BANDS.length} bands + 3 per channel): ` +
    `${(bytes / 2 ** 20).toFixed(1)} MiB for ${rows} rows (${(bytes / rows).toFixed(1)} bytes a row)\n`,
);

const reader = openStoreForReading(path);
const from = { kind: 'wall' as const, ms: 1.7e12 + (DAYS - 7) * 86400e3, text: '' };
const to = { kind: 'wall' as const, ms: 1.7e12 + DAYS * 86400e3, text: '' };
const times: number[] = [];
let got = 0;
for (let i = 0; i < 9; i++) {
  const t0 = performance.now();
  const r = queryTrend(reader, { channel: 'ch5', band: BANDS[3], from, to, every: '1m', quantities: ['bandRms'] });
  times.push(performance.now() - t0);
  got = r.series[0].rows.length;
}
reader.close();
process.stdout.write(
  `7-day query at 1 min, one band of one channel: ${got} rows in ${median(times).toFixed(1)} ms (median of 9)\n`,
);

// ---- (4) a report of the last 7 days of that store, as a whole process (wall time and peak RSS by /usr/bin/time)
const root = process.cwd(); // scripts/bench.mjs runs each benchmark from the repository root
const fromIso = new Date(1.7e12 + (DAYS - 7) * 86400e3).toISOString();
const toIso = new Date(1.7e12 + DAYS * 86400e3).toISOString();
const rep = spawnSync(
  '/usr/bin/time',
  [
    '-f',
    '%e %M',
    process.execPath,
    join(root, 'bin/floorline.mjs'),
    'report',
    '--store',
    path,
    '--from',
    fromIso,
    '--to',
    toIso,
    '-o',
    join(dir, 'week.html'),
  ],
  { encoding: 'utf8' },
);
const [secs, kib] = (rep.stderr.trim().split('\n').pop() ?? '').split(' ').map(Number);
process.stdout.write(
  rep.status === 0
    ? `report of 7 days (${CH} ch × ${BANDS.length} bands, 1 h rows): ${secs.toFixed(2)} s wall, ${(kib / 1024).toFixed(0)} MiB peak RSS, ${(statSync(join(dir, 'week.html')).size / 1024).toFixed(0)} KiB of HTML\n`
    : `report failed: ${rep.stderr}\n`,
);
