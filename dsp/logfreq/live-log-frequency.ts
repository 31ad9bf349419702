// Streaming log-frequency density for the live view: the same per-point estimate as the offline form
// (Tröbs & Heinzel 2006; segment length, window, overlap and mean removal per point), computed on a cascade
// of half-rate stages so low frequencies cost almost nothing.
//
// Design (ours): stage 0 runs at the input rate; stage k+1 is stage k through a 10th-order Butterworth
// low-pass at 0.2·R_k, keeping every second sample (R_{k+1} = R_k/2). A point at frequency f runs on the
// deepest stage with f ≤ R_k/4 whose segment still has ≥ 64 samples; there the anti-alias filters have passed
// f with < 0.01 % droop, which is divided out exactly from |H(f)|², and what aliases onto [0, R_k/4] comes from
// ≥ 0.375·R_{k−1}, where the filter is ≥ 100 dB down (tan-warped Butterworth magnitude). Each point accumulates its open segments sample by
// sample (two multiply-adds per sample and segment) and keeps a rolling mean of about its last K_j segment powers,
// K_j being what fits in `spanSeconds`: every point shows roughly the last span of sample time.
// The rolling mean is kept in at most 33 batch sums per point (K_j/32 segments each, the newest one filling),
// so memory and a snapshot cost O(points), not O(segments), and the span moves in steps of 1/32.
// Cost per input sample: about two filter cascades (Σ 2^-k) plus, per point, open segments × rate of its stage.
import { makeWindow } from '../windows.ts';
import { butterworthSos, sosPowerResponse, type SosFilter } from '../filters/butterworth.ts';
import { SosCascade } from '../filters/sos-filter.ts';
import { planLogFrequencies, type LogFrequencyPlanOptions } from './plan.ts';
import { SingleBinKernel } from './single-bin-dft.ts';
import { equalWeightEquivalent, overlapRho } from '../welch.ts';

/** Grid options as planLogFrequencies (defaults here: 120 points, 10 averages), plus the span and chunking. */
export interface LiveLogFrequencyOptions extends Pick<
  LogFrequencyPlanOptions,
  'sampleRate' | 'minFrequency' | 'maxFrequency' | 'points' | 'averages' | 'window' | 'overlap'
> {
  /** Sample time each point averages over (its rolling record), seconds. Default 100. */
  spanSeconds?: number;
  /** Absolute index of the first sample pushed. Default 0. */
  firstSample?: number;
  /** Largest block handled in one pass; longer pushes are split (no allocation). Default 8192. */
  chunk?: number;
}

/** Anti-alias low-pass of each half-rate stage, as a fraction of the rate it runs at. */
export const DECIMATOR_CUTOFF = 0.2;
export const DECIMATOR_ORDER = 10;
/** Highest frequency a stage serves, as a fraction of its rate. */
export const STAGE_TOP = 0.25;
const MIN_STAGE_SEGMENT = 64;
const MAX_STAGES = 30;
const MAX_BATCHES = 32;

export class LiveLogFrequency {
  readonly sampleRate: number;
  readonly count: number;
  readonly window: string;
  readonly overlap: number;
  readonly frequency: Float64Array;
  /** Per point: stage index, stage segment length and step, resolution bandwidth (ENBW, Hz). */
  readonly stage: Int32Array;
  readonly segment: Int32Array;
  readonly step: Int32Array;
  readonly rbwHz: Float64Array;
  /** Segments per batch of each point's rolling mean, and complete batches kept (plus the one filling). */
  readonly batch: Int32Array;
  readonly batches: Int32Array;
  /** Divides out the decimators' |H(f)|² (1 on stage 0). */
  readonly droop: Float64Array;
  readonly stages: number;
  /** The anti-alias filter of every stage boundary (stage k → k+1 uses the same normalised design). */
  readonly decimatorFilter: SosFilter;
  /** Absolute index of the last sample pushed, and of the last sample of the newest completed segment. */
  lastSample: number;
  lastSegmentSample = -1;

  private readonly chunk: number;
  private first: number;
  /** A constant taken out of every sample (the first one after construction or reset): the mean removal per
   * segment cancels it exactly, and without it a large DC offset would cancel digits in A − mean·C0. */
  private offset = NaN;
  private readonly decimators: SosCascade[];
  private readonly phase: Uint8Array;
  private readonly stageCount: Float64Array;
  private readonly buffers: Float64Array[];
  private readonly stagePoints: Int32Array[];
  // Kernel tables (w·cos, −w·sin) of every point, packed.
  private readonly tableOffset: Int32Array;
  private readonly kRe: Float64Array;
  private readonly kIm: Float64Array;
  private readonly c0re: Float64Array;
  private readonly c0im: Float64Array;
  private readonly norm: Float64Array;
  // Open segments: a ring of `slotCap` per point.
  private readonly slotOffset: Int32Array;
  private readonly slotCap: Int32Array;
  private readonly slotHead: Int32Array;
  private readonly slotCount: Int32Array;
  private readonly slotStart: Float64Array;
  private readonly slotRe: Float64Array;
  private readonly slotIm: Float64Array;
  private readonly slotSum: Float64Array;
  private readonly nextStart: Float64Array;
  // Finished segment powers: a ring of batches + 1 batch sums per point, the one at ringPos filling.
  private readonly ringOffset: Int32Array;
  private readonly ringPos: Int32Array;
  private readonly ring: Float64Array;
  private readonly ringN: Int32Array;
  // Squared overlap correlations ρ(l·D) per point, for the equivalent averages of any count.
  private readonly rhoOffset: Int32Array;
  private readonly rhoCount: Int32Array;
  private readonly rho: Float64Array;

  constructor(options: LiveLogFrequencyOptions) {
    const fs = options.sampleRate;
    const span = options.spanSeconds ?? 100;
    if (!(span > 0) || !Number.isFinite(span))
      throw new RangeError(`live log-frequency: spanSeconds must be positive, got ${span}`);
    const chunk = options.chunk ?? 8192;
    if (!Number.isInteger(chunk) || chunk < 16)
      throw new RangeError(`live log-frequency: chunk must be an integer ≥ 16, got ${chunk}`);
    const plan = planLogFrequencies({
      sampleRate: fs,
      samples: Math.round(span * fs),
      minFrequency: options.minFrequency,
      maxFrequency: options.maxFrequency,
      points: options.points ?? 120,
      averages: options.averages ?? 10,
      window: options.window,
      overlap: options.overlap,
    });
    this.sampleRate = fs;
    this.count = plan.count;
    this.window = plan.window;
    this.overlap = plan.overlap;
    this.chunk = chunk;
    this.first = options.firstSample ?? 0;
    this.lastSample = this.first - 1;
    const n = plan.count;
    this.frequency = Float64Array.from(plan.frequency);
    this.stage = new Int32Array(n);
    this.segment = new Int32Array(n);
    this.step = new Int32Array(n);
    this.rbwHz = new Float64Array(n);
    this.batch = new Int32Array(n);
    this.batches = new Int32Array(n);
    this.droop = new Float64Array(n);
    this.decimatorFilter = butterworthSos('lowpass', DECIMATOR_ORDER, DECIMATOR_CUTOFF, 1);
    let stages = 1;
    for (let j = 0; j < n; j++) {
      const f = plan.frequency[j];
      const full = plan.segment[j];
      let k = 0;
      while (
        k + 1 < MAX_STAGES &&
        f <= (STAGE_TOP * fs) / 2 ** (k + 1) &&
        Math.round(full / 2 ** (k + 1)) >= MIN_STAGE_SEGMENT
      )
        k++;
      const len = Math.round(full / 2 ** k);
      this.stage[j] = k;
      this.segment[j] = len;
      this.step[j] = Math.max(1, len - Math.floor(plan.overlap * len));
      const want = Math.max(1, plan.averages[j]);
      this.batch[j] = Math.ceil(want / MAX_BATCHES);
      this.batches[j] = Math.ceil(want / this.batch[j]);
      let h2 = 1;
      for (let i = 0; i < k; i++) h2 *= sosPowerResponse(this.decimatorFilter, f / (fs / 2 ** i), 1);
      this.droop[j] = 1 / h2;
      stages = Math.max(stages, k + 1);
    }
    this.stages = stages;
    this.decimators = [];
    this.buffers = [];
    for (let k = 0; k < stages; k++) {
      this.decimators.push(new SosCascade(this.decimatorFilter));
      this.buffers.push(new Float64Array(k === 0 ? 0 : Math.ceil(chunk / 2 ** k) + 1));
    }
    this.phase = new Uint8Array(stages);
    this.stageCount = new Float64Array(stages);
    const perStage: number[][] = Array.from({ length: stages }, () => []);
    for (let j = 0; j < n; j++) perStage[this.stage[j]].push(j);
    this.stagePoints = perStage.map((list) => Int32Array.from(list));

    // Tables, slots and rings, packed per point.
    this.tableOffset = new Int32Array(n);
    this.slotOffset = new Int32Array(n);
    this.slotCap = new Int32Array(n);
    this.ringOffset = new Int32Array(n);
    let tableTotal = 0;
    let slotTotal = 0;
    let ringTotal = 0;
    for (let j = 0; j < n; j++) {
      this.tableOffset[j] = tableTotal;
      tableTotal += this.segment[j];
      this.slotOffset[j] = slotTotal;
      this.slotCap[j] = Math.ceil(this.segment[j] / this.step[j]) + 1;
      slotTotal += this.slotCap[j];
      this.ringOffset[j] = ringTotal;
      ringTotal += this.batches[j] + 1;
    }
    this.kRe = new Float64Array(tableTotal);
    this.kIm = new Float64Array(tableTotal);
    this.c0re = new Float64Array(n);
    this.c0im = new Float64Array(n);
    this.norm = new Float64Array(n);
    const rhos: Float64Array[] = [];
    let longest = 2;
    for (let j = 0; j < n; j++) longest = Math.max(longest, this.segment[j]);
    const kernel = new SingleBinKernel(longest);
    for (let j = 0; j < n; j++) {
      const len = this.segment[j];
      const rate = fs / 2 ** this.stage[j];
      const info = makeWindow(plan.window, len);
      const m = (this.frequency[j] * len) / rate;
      kernel.build(info.values, m);
      this.kRe.set(kernel.re.subarray(0, len), this.tableOffset[j]);
      this.kIm.set(kernel.im.subarray(0, len), this.tableOffset[j]);
      this.c0re[j] = kernel.c0re;
      this.c0im[j] = kernel.c0im;
      const sides = m === 0 || (len % 2 === 0 && m === len / 2) ? 1 : 2;
      // One-sided density as scipy.signal.welch: sides·|X|²/(R_k·Σw²), times the droop correction.
      this.norm[j] = (sides * this.droop[j]) / (rate * kernel.sumSq);
      this.rbwHz[j] = (info.nenbw * rate) / len;
      rhos.push(overlapRho(info.values, this.step[j]));
    }
    this.slotHead = new Int32Array(n);
    this.slotCount = new Int32Array(n);
    this.slotStart = new Float64Array(slotTotal);
    this.slotRe = new Float64Array(slotTotal);
    this.slotIm = new Float64Array(slotTotal);
    this.slotSum = new Float64Array(slotTotal);
    this.nextStart = new Float64Array(n);
    this.ringPos = new Int32Array(n);
    this.ring = new Float64Array(ringTotal);
    this.ringN = new Int32Array(ringTotal);
    this.rhoOffset = new Int32Array(n);
    this.rhoCount = new Int32Array(n);
    let rhoTotal = 0;
    for (let j = 0; j < n; j++) {
      this.rhoOffset[j] = rhoTotal;
      this.rhoCount[j] = rhos[j].length;
      rhoTotal += rhos[j].length;
    }
    this.rho = new Float64Array(rhoTotal);
    for (let j = 0; j < n; j++) this.rho.set(rhos[j], this.rhoOffset[j]);
  }

  /** Feeds samples[start..end) (calibrated units). Allocates nothing. */
  push(samples: Float64Array, start = 0, end = samples.length): void {
    for (let at = start; at < end; at += this.chunk) this.pushChunk(samples, at, Math.min(end, at + this.chunk));
  }

  private pushChunk(x: Float64Array, start: number, end: number): void {
    if (Number.isNaN(this.offset)) this.offset = x[start];
    // Stage 0 reads the input in place; each deeper stage fills its buffer from the one above.
    let src = x;
    let srcStart = start;
    let srcEnd = end;
    for (let k = 1; k < this.stages; k++) {
      const dec = this.decimators[k];
      const dst = this.buffers[k];
      let ph = this.phase[k];
      let o = 0;
      for (let i = srcStart; i < srcEnd; i++) {
        const v = dec.step(k === 1 ? src[i] - this.offset : src[i]);
        if (ph === 1) dst[o++] = v; // keep the second of each pair: stage-k sample q is input sample (q+1)·2^k − 1
        ph ^= 1;
      }
      this.phase[k] = ph;
      this.runStage(k - 1, src, srcStart, srcEnd);
      src = dst;
      srcStart = 0;
      srcEnd = o;
    }
    this.runStage(this.stages - 1, src, srcStart, srcEnd);
    this.lastSample += end - start;
  }

  /** Runs the points of stage k over y[from..to), which are the next stage-k samples. */
  private runStage(k: number, y: Float64Array, from: number, to: number): void {
    const base = this.stageCount[k];
    const n = to - from;
    const points = this.stagePoints[k];
    for (let q = 0; q < points.length; q++) this.runPoint(points[q], y, from, base, base + n);
    this.stageCount[k] = base + n;
  }

  private runPoint(p: number, y: Float64Array, from: number, base: number, end: number): void {
    const stage0 = this.stage[p] === 0; // deeper stages are fed from input − offset already
    const len = this.segment[p];
    const step = this.step[p];
    const toff = this.tableOffset[p];
    const kRe = this.kRe;
    const kIm = this.kIm;
    const soff = this.slotOffset[p];
    const cap = this.slotCap[p];
    const sStart = this.slotStart;
    const sRe = this.slotRe;
    const sIm = this.slotIm;
    const sSum = this.slotSum;
    let head = this.slotHead[p];
    let count = this.slotCount[p];
    let next = this.nextStart[p];
    let idx = base;
    while (idx < end) {
      if (next === idx) {
        const s = soff + ((head + count) % cap);
        sStart[s] = idx;
        sRe[s] = 0;
        sIm[s] = 0;
        sSum[s] = 0;
        count++;
        next += step;
      }
      let stop = end;
      if (next < stop) stop = next;
      if (count > 0) {
        const oldestEnd = sStart[soff + head] + len;
        if (oldestEnd < stop) stop = oldestEnd;
      }
      const yOff = from - base;
      const dc = stage0 ? this.offset : 0;
      if (count === 2) {
        // The usual case at 50 % overlap: both open segments in one pass, each sample read once. Every
        // accumulator sees the same operations in the same order as in the general loop below.
        const s = soff + head;
        const u = soff + ((head + 1) % cap);
        let re0 = sRe[s];
        let im0 = sIm[s];
        let sum0 = sSum[s];
        let re1 = sRe[u];
        let im1 = sIm[u];
        let sum1 = sSum[u];
        for (let i = idx, t = toff + (idx - sStart[s]), w = toff + (idx - sStart[u]); i < stop; i++, t++, w++) {
          const v = y[i + yOff] - dc;
          re0 += v * kRe[t];
          im0 += v * kIm[t];
          sum0 += v;
          re1 += v * kRe[w];
          im1 += v * kIm[w];
          sum1 += v;
        }
        sRe[s] = re0;
        sIm[s] = im0;
        sSum[s] = sum0;
        sRe[u] = re1;
        sIm[u] = im1;
        sSum[u] = sum1;
      } else
        for (let c = 0; c < count; c++) {
          const s = soff + ((head + c) % cap);
          const t0 = toff + (idx - sStart[s]);
          let re = sRe[s];
          let im = sIm[s];
          let sum = sSum[s];
          for (let i = idx, t = t0; i < stop; i++, t++) {
            const v = y[i + yOff] - dc;
            re += v * kRe[t];
            im += v * kIm[t];
            sum += v;
          }
          sRe[s] = re;
          sIm[s] = im;
          sSum[s] = sum;
        }
      idx = stop;
      while (count > 0 && sStart[soff + head] + len === idx) {
        this.finish(p, soff + head, idx - 1);
        head = (head + 1) % cap;
        count--;
      }
    }
    this.slotHead[p] = head;
    this.slotCount[p] = count;
    this.nextStart[p] = next;
  }

  private finish(p: number, s: number, lastStageSample: number): void {
    const mean = this.slotSum[s] / this.segment[p];
    const xr = this.slotRe[s] - mean * this.c0re[p];
    const xi = this.slotIm[s] - mean * this.c0im[p];
    const off = this.ringOffset[p];
    let at = off + this.ringPos[p];
    if (this.ringN[at] === this.batch[p]) {
      // The filling batch is full: start the next one, dropping the oldest.
      this.ringPos[p] = (this.ringPos[p] + 1) % (this.batches[p] + 1);
      at = off + this.ringPos[p];
      this.ring[at] = 0;
      this.ringN[at] = 0;
    }
    this.ring[at] += xr * xr + xi * xi;
    this.ringN[at]++;
    const input = this.first + (lastStageSample + 1) * 2 ** this.stage[p] - 1;
    if (input > this.lastSegmentSample) this.lastSegmentSample = input;
  }

  /** Current density per point (unit²/Hz); NaN where no segment has completed yet. */
  psd(out: Float64Array = new Float64Array(this.count)): Float64Array {
    for (let p = 0; p < this.count; p++) {
      const off = this.ringOffset[p];
      const slots = this.batches[p] + 1;
      let sum = 0;
      let c = 0;
      for (let i = 0; i < slots; i++) {
        sum += this.ring[off + i];
        c += this.ringN[off + i];
      }
      out[p] = c === 0 ? NaN : (sum / c) * this.norm[p];
    }
    return out;
  }

  /** Segments in each point's current mean. */
  averagesUsed(out: Float64Array = new Float64Array(this.count)): Float64Array {
    for (let p = 0; p < this.count; p++) {
      const off = this.ringOffset[p];
      let c = 0;
      for (let i = 0; i <= this.batches[p]; i++) c += this.ringN[off + i];
      out[p] = c;
    }
    return out;
  }

  /** Overlap-corrected averages (Welch 1967) of each point's current mean. */
  equivalentAverages(out: Float64Array = new Float64Array(this.count)): Float64Array {
    this.averagesUsed(out);
    for (let p = 0; p < this.count; p++)
      out[p] = equalWeightEquivalent(out[p], this.rho, this.rhoOffset[p], this.rhoCount[p]);
    return out;
  }

  /** Drops open segments and filter states (at a gap); completed averages stay. The next sample is `nextSample`. */
  reset(nextSample: number = this.lastSample + 1): void {
    for (const d of this.decimators) d.reset();
    this.phase.fill(0);
    this.stageCount.fill(0);
    this.slotCount.fill(0);
    this.slotHead.fill(0);
    this.nextStart.fill(0);
    this.first = nextSample;
    this.lastSample = nextSample - 1;
    this.offset = NaN;
  }

  /** Drops everything, averages included. */
  clear(nextSample: number = this.lastSample + 1): void {
    this.reset(nextSample);
    this.ring.fill(0);
    this.ringN.fill(0);
    this.ringPos.fill(0);
    this.lastSegmentSample = -1;
  }
}
