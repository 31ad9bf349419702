// Cost of the alarm detectors inside the pipeline: the same 60 s of seeded noise (2 channels, 20 kS/s, segment
// 4096, 10 snapshots/s) through the pipeline without detectors (the reference) and with AlarmHook + a baseline,
// alternating, medians of 5. Prints samples/s for both and the detectors' share of the run.
import { Pipeline } from '../../agent/pipeline/pipeline.ts';
import { AlarmHook } from '../../agent/rules/alarm-hook.ts';
import { BaselineCapture } from '../../agent/baseline/capture.ts';
import { defaultBands } from '../../agent/rules/default-bands.ts';
import type { StreamInfo } from '../../protocol/stream.ts';
import { SeededRandom } from '../../dsp/random.ts';

const FS = 20000;
const SECONDS = 60;
const CH = 2;
const BLOCK = 2000;
const info: StreamInfo = {
  sampleRate: FS,
  channels: Array.from({ length: CH }, (_, i) => ({ name: `ch${i}`, unit: 'V', scale: 1, fullScaleCounts: Infinity })),
  source: { kind: 'simulator', label: 'alarms bench' },
  firstSample: 0,
  startWallTime: '2026-01-01T00:00:00.000Z',
};
const rng = new SeededRandom(1);
const data = Array.from({ length: CH }, () => rng.fillGaussian(new Float64Array(FS * SECONDS), 1e-6));
const settings = { sampleRate: FS, segment: 4096, window: 'hann', overlap: 0.5, detrend: 'mean' as const };

const cap = new BaselineCapture({
  settings,
  channels: info.channels,
  firstSample: 0,
  samples: FS * SECONDS,
  bands: defaultBands(FS, 4096, 2),
  source: 'bench',
});
cap.push({ firstSample: 0, frames: FS * SECONDS, data });
const baseline = cap.result('2026-01-01T00:00:00.000Z');

function run(withAlarms: boolean): number {
  const p = new Pipeline({
    analysis: { segment: 4096, window: 'hann', overlap: 0.5, detrend: 'mean' },
    mode: 'lossless',
  });
  if (withAlarms) p.addDetector(new AlarmHook({ baseline }));
  p.info(info);
  const view = data.map(() => new Float64Array(BLOCK));
  const t0 = performance.now();
  for (let first = 0; first < FS * SECONDS; first += BLOCK) {
    for (let c = 0; c < CH; c++) view[c].set(data[c].subarray(first, first + BLOCK));
    p.block({ firstSample: first, frames: BLOCK, data: view });
  }
  p.end();
  return performance.now() - t0;
}

const median = (xs: number[]): number => [...xs].sort((a, b) => a - b)[xs.length >> 1];
const plain: number[] = [];
const alarms: number[] = [];
run(false);
run(true);
for (let i = 0; i < 5; i++) {
  plain.push(run(false));
  alarms.push(run(true));
}
const total = CH * FS * SECONDS;
const a = median(alarms);
const b = median(plain);
console.log(
  `pipeline alone          ${(total / (b / 1000) / 1e6).toFixed(2)} M samples/s  (${b.toFixed(0)} ms for ${SECONDS} s × ${CH} ch)`,
);
console.log(`pipeline + alarms       ${(total / (a / 1000) / 1e6).toFixed(2)} M samples/s  (${a.toFixed(0)} ms)`);
console.log(
  `detectors per snapshot  ${((a - b) / (SECONDS * 10)).toFixed(3)} ms for ${CH} channels × 2049 bins (${(((a - b) / a) * 100).toFixed(0)} % of the run)`,
);
console.log(
  `real-time share         ${(((a - b) / (SECONDS * 1000)) * 100).toFixed(2)} % of one core for the detectors at ${FS / 1000} kS/s × ${CH} ch`,
);
