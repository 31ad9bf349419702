// Live many-channel run: 32 ch × 100 kS/s (3.2 M samples/s) from a source paced to the wall clock in 10 ms blocks,
// through the bounded (live) pipeline with the default detectors, on one thread. Reports dropped blocks (must be
// 0), the process's CPU, each core's busy share from /proc/stat (machine-wide: other jobs on the machine count
// too), and the latency from the block holding a snapshot's last sample being handed to the pipeline to the
// snapshot being emitted.
// Run: npm run bench -- live-many   (LIVE_SECONDS=600 for ten minutes; default 60)
import { readFileSync } from 'node:fs';
import { Pipeline } from '../../agent/pipeline/pipeline.ts';
import { AlarmHook } from '../../agent/rules/alarm-hook.ts';
import type { StreamInfo } from '../../protocol/stream.ts';
import { SeededRandom } from '../../dsp/random.ts';

const CH = 32;
const RATE = 100_000;
const FRAMES = RATE / 100;
const SECONDS = Number(process.env.LIVE_SECONDS ?? 60);
const POOL = 8;
const rng = new SeededRandom(32);
const pool = Array.from({ length: POOL }, () =>
  Array.from({ length: CH }, () => rng.fillGaussian(new Float64Array(FRAMES), 1000)),
);
const info: StreamInfo = {
  sampleRate: RATE,
  channels: Array.from({ length: CH }, (_, c) => ({
    name: `ch${c}`,
    unit: 'V',
    scale: 1e-7,
    fullScaleCounts: 8388607,
  })),
  source: { kind: 'simulator', label: 'live many-channel bench' },
  firstSample: 0,
  startWallTime: '2026-01-01T00:00:00.000Z',
};

/** Busy and total jiffies per core. */
function cores(): { busy: number; total: number }[] {
  return readFileSync('/proc/stat', 'utf8')
    .split('\n')
    .filter((l) => /^cpu\d+ /.test(l))
    .map((l) => {
      const v = l.trim().split(/\s+/).slice(1).map(Number);
      const idle = v[3] + v[4];
      const total = v.reduce((a, b) => a + b, 0);
      return { busy: total - idle, total };
    });
}

const p = new Pipeline({ mode: 'bounded' });
p.addDetector(new AlarmHook({}));
p.info(info);
const latencies: number[] = [];
// When each block was handed to the pipeline (a ring: a snapshot is never more than a few blocks behind).
const RING = 1024;
const handedAt = new Float64Array(RING);
p.on('snapshot', (s) => {
  latencies.push(performance.now() - handedAt[Math.floor(s.sample / FRAMES) % RING]);
});
const c0 = cores();
const u0 = process.cpuUsage();
const t0 = performance.now();
let next = 0;
for (let b = 0; next < SECONDS * RATE; b++) {
  handedAt[b % RING] = performance.now();
  p.block({ firstSample: next, frames: FRAMES, data: pool[b % POOL] });
  next += FRAMES;
  const due = t0 + (next / RATE) * 1000;
  await new Promise((r) => setTimeout(r, Math.max(0, due - performance.now())));
}
// Let the queue drain before ending.
await new Promise((r) => setTimeout(r, 200));
p.end();
const wall = performance.now() - t0;
const u = process.cpuUsage(u0);
const c1 = cores();
const sorted = [...latencies].sort((a, b) => a - b);
const q = (f: number): number => sorted[Math.min(sorted.length - 1, Math.floor(f * sorted.length))];
const k = p.counters();
console.log(
  `${CH} ch × ${RATE / 1000} kS/s, ${FRAMES}-frame blocks paced to the wall clock, bounded pipeline + default detectors, ${SECONDS} s`,
);
console.log(`  dropped blocks ${k.droppedBlocks} (samples ${k.droppedSamples}), snapshots ${latencies.length}`);
console.log(`  process CPU ${(((u.user + u.system) / 1000 / wall) * 100).toFixed(1)} % of one core`);
console.log(
  `  per core (machine-wide, /proc/stat): ${c1.map((c, i) => `cpu${i} ${((100 * (c.busy - c0[i].busy)) / (c.total - c0[i].total)).toFixed(0)} %`).join(', ')}`,
);
console.log(
  `  latency block handed over → snapshot emitted: median ${q(0.5).toFixed(1)} ms, p99 ${q(0.99).toFixed(1)} ms, max ${sorted[sorted.length - 1].toFixed(1)} ms`,
);
