// The one WebAssembly SIMD FFT found on the npm registry for real input (@echogarden/pffft-wasm 0.4.2, a pffft
// build: float32 only; no float64 SIMD build of any FFT is published there) against floorline's float64 radix-4
// RealFftPower and fft.js, side by side in one run: time per 4096-point real transform + |X|², and the largest
// relative error of |X|² against float64 (numpy.fft.rfft agrees with RealFftPower to 1e-13 in tests/dsp).
// Not a dependency: install it for this run only with `npm i --no-save @echogarden/pffft-wasm@0.4.2`.
import FFT from 'fft.js';
import { RealFftPower } from '../../dsp/real-fft-power.ts';
import { SeededRandom } from '../../dsp/random.ts';

const N = 4096;
const REPS = 20000;
const x = new SeededRandom(4).fillGaussian(new Float64Array(N));
// A strong line over a floor 140 dB down, as a 24-bit converter would see it.
for (let i = 0; i < N; i++) x[i] = x[i] * 1e-7 + Math.sin((2 * Math.PI * 400.3 * i) / N);
const med = (xs: number[]): number => [...xs].sort((a, b) => a - b)[xs.length >> 1];
function perCall(fn: () => void): number {
  const t0 = performance.now();
  for (let r = 0; r < REPS; r++) fn();
  return ((performance.now() - t0) * 1000) / REPS;
}

const ours = new RealFftPower(N);
const ref = new Float64Array(N / 2 + 1);
ours.power(x, ref);

const fftjs = new FFT(N);
const fjOut = new Float64Array(2 * N);
const fjPow = new Float64Array(N / 2 + 1);
const fftjsCall = (): void => {
  fftjs.realTransform(fjOut, x);
  for (let k = 0; k <= N / 2; k++) fjPow[k] = fjOut[2 * k] ** 2 + fjOut[2 * k + 1] ** 2;
};

type Pffft = {
  _pffft_new_setup(n: number, kind: number): number;
  _pffft_aligned_malloc(bytes: number): number;
  _pffft_transform_ordered(setup: number, input: number, output: number, work: number, dir: number): void;
  HEAPF32: Float32Array;
};
let pffft: Pffft | undefined;
try {
  const mod = (await import('@echogarden/pffft-wasm/simd' as string)) as { default: () => Promise<Pffft> };
  pffft = await mod.default();
} catch {
  console.log('@echogarden/pffft-wasm is not installed: `npm i --no-save @echogarden/pffft-wasm@0.4.2` to include it');
}
const pPow = new Float64Array(N / 2 + 1);
let pffftCall: (() => void) | undefined;
if (pffft) {
  const m = pffft;
  const setup = m._pffft_new_setup(N, 0); // PFFFT_REAL
  const input = m._pffft_aligned_malloc(N * 4);
  const output = m._pffft_aligned_malloc(N * 4);
  const work = m._pffft_aligned_malloc(N * 4);
  pffftCall = (): void => {
    const heap = m.HEAPF32;
    const inAt = input >> 2;
    for (let i = 0; i < N; i++) heap[inAt + i] = x[i];
    m._pffft_transform_ordered(setup, input, output, work, 0); // PFFFT_FORWARD
    const o = output >> 2;
    // Ordered real output: [X0, X(N/2), re1, im1, re2, im2, ...].
    pPow[0] = heap[o] ** 2;
    pPow[N / 2] = heap[o + 1] ** 2;
    for (let k = 1; k < N / 2; k++) pPow[k] = heap[o + 2 * k] ** 2 + heap[o + 2 * k + 1] ** 2;
  };
}

const runs: Record<string, number[]> = { ours: [], fftjs: [], pffft: [] };
for (let round = 0; round < 7; round++) {
  runs.ours.push(perCall(() => ours.power(x, ref)));
  runs.fftjs.push(perCall(fftjsCall));
  if (pffftCall) runs.pffft.push(perCall(pffftCall));
}
const worst = (p: Float64Array): number => {
  let w = 0;
  for (let k = 0; k <= N / 2; k++) w = Math.max(w, Math.abs(p[k] - ref[k]) / ref[k]);
  return w;
};
// The floor: bins far from the line, where float32 rounding of the line's samples lands.
const floorError = (p: Float64Array): number => {
  let w = 0;
  for (let k = 1000; k < 2000; k++) w = Math.max(w, Math.abs(p[k] - ref[k]) / ref[k]);
  return w;
};
console.log(`${N}-point real transform + |X|², medians of 7 rounds × ${REPS}`);
console.log(`floorline RealFftPower (float64 radix-4)  ${med(runs.ours).toFixed(2)} µs`);
console.log(
  `fft.js realTransform (float64)            ${med(runs.fftjs).toFixed(2)} µs   max rel. diff ${worst(fjPow).toExponential(1)}, on the floor ${floorError(fjPow).toExponential(1)}`,
);
if (pffftCall) {
  console.log(
    `pffft WASM SIMD (float32)                 ${med(runs.pffft).toFixed(2)} µs   max rel. diff ${worst(pPow).toExponential(1)}, on the floor ${floorError(pPow).toExponential(1)}`,
  );
}
