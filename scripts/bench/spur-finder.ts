// Cost of one SpurFinder.find on a replay-like density (2049 bins: Welch 4096, Hann, exponential averaging τ = 10 s
// of seeded 1/f + white noise at 8 kS/s, with mains-like lines), side by side in one run: the one-pass maxima scan
// in use, the plain scan it replaced (every bin against its ±L neighbours), and the floor taken everywhere by the
// incremental sorted-window median (RunningMedian.apply) before the maxima test — the "whole running median" route.
// Alternating rounds, medians. Every variant must report the same lines (checked before timing).
import { SpurFinder } from '../../dsp/detection/spur-finder.ts';
import { RunningMedian } from '../../dsp/detection/running-median.ts';
import { WelchEstimator } from '../../dsp/welch.ts';
import { SeededRandom } from '../../dsp/random.ts';
import { PlainScanSpurFinder } from '../../tests/alarms/plain-scan-spur-finder.ts';

const FS = 8000;
const est = new WelchEstimator({
  sampleRate: FS,
  segment: 4096,
  window: 'hann',
  overlap: 0.5,
  detrend: 'mean',
  averaging: { mode: 'exponential', tauSeconds: 10 },
});
const rng = new SeededRandom(7);
const x = new Float64Array(FS * 60);
let pink = 0;
for (let i = 0; i < x.length; i++) {
  pink = 0.995 * pink + rng.gaussian() * 4e-8;
  x[i] =
    rng.gaussian() * 1e-7 +
    pink +
    3e-6 * Math.sin((2 * Math.PI * 50.02 * i) / FS) +
    1e-6 * Math.sin((2 * Math.PI * 150.1 * i) / FS);
}
est.push(x);
const psd = est.psd();
const options = {
  frequencies: est.frequencies,
  binHz: est.binHz,
  mainLobeHalfWidth: est.window.mainLobeHalfWidth,
  maxLines: 64,
};
const ratio = 10; // the spur rule's default 10 dB margin
const fast = new SpurFinder(options);
const plain = new PlainScanSpurFinder(options);
const median = new RunningMedian(psd.length, Math.max(8, 4 * fast.lobe));
const floor = new Float64Array(psd.length);

/** Maxima test over a floor computed at every bin by the sliding sorted window. */
function wholeMedianFind(): number {
  median.apply(psd, floor);
  let n = 0;
  const L = fast.lobe;
  for (let k = L + 1; k < psd.length - L; k++) {
    const p = psd[k];
    if (!(p > ratio * floor[k])) continue;
    let peak = true;
    for (let j = k - L; j <= k + L; j++) if (psd[j] > p || (psd[j] === p && j < k)) peak = false;
    if (peak) n++;
  }
  return n;
}

const nFast = fast.find(psd, ratio);
if (nFast !== plain.find(psd, ratio) || nFast !== wholeMedianFind()) throw new Error('variants disagree on the lines');
for (let i = 0; i < nFast; i++)
  if (fast.lineBin[i] !== plain.lineBin[i] || fast.lineAmplitude[i] !== plain.lineAmplitude[i])
    throw new Error('lines differ');

const CALLS = 20000;
function time(f: () => number): number {
  const t0 = performance.now();
  let s = 0;
  for (let i = 0; i < CALLS; i++) s += f();
  if (s < 0) console.log(s);
  return ((performance.now() - t0) * 1000) / CALLS;
}
const runs: Record<string, number[]> = { fast: [], plain: [], whole: [] };
for (let round = 0; round < 7; round++) {
  runs.fast.push(time(() => fast.find(psd, ratio)));
  runs.plain.push(time(() => plain.find(psd, ratio)));
  runs.whole.push(time(wholeMedianFind));
}
const med = (xs: number[]): number => [...xs].sort((a, b) => a - b)[xs.length >> 1];
console.log(
  `density: ${psd.length} bins, lobe ±${fast.lobe}, floor median ±${median.halfWidth} bins, ${nFast} lines at ${10 * Math.log10(ratio)} dB`,
);
console.log(`one-pass maxima scan (in use)         ${med(runs.fast).toFixed(2)} µs per find`);
console.log(`plain scan (before)                   ${med(runs.plain).toFixed(2)} µs per find`);
console.log(`floor at every bin (sorted window)    ${med(runs.whole).toFixed(2)} µs per find`);
console.log(`speed-up over the plain scan          ${(med(runs.plain) / med(runs.fast)).toFixed(2)}×`);
