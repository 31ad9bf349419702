// Raw counts → channel units (unit per count from the stream descriptor) and clip detection.
// A sample clips when |raw| ≥ (1 − 0.001) · full scale, i.e. within 0.1 % of full scale (common practice:
// an ADC reading at or next to its end codes has lost information, the analog value may be larger).
// Values are rounded to float32 (Math.fround), the precision recordings store, so the live analysis sees exactly
// the samples a replay of its recording will see: replays reproduce live spectra bit for bit. float32 keeps a
// 24-bit mantissa, so a 24-bit ADC loses nothing.
// Non-finite policy (decided here, once): a sample that is NaN or ±Inf, or whose value in channel units overflows
// float32, is a fault. condition() counts such values and returns the count; the pipeline then excludes every
// frame holding one exactly as it excludes a gap, so no analyser, detector or recording ever sees a non-finite
// value. Such samples are never counted as clipped.
import type { ChannelInfo } from '../../protocol/stream.ts';
import type { ClipNotice } from './types.ts';

export const CLIP_FRACTION = 0.001;
/** Largest finite float32: a sample beyond it cannot be stored in a recording, so it counts as non-finite. */
export const FLOAT32_MAX = 3.4028234663852886e38;

/** The one test of the non-finite policy: NaN, ±Inf and values beyond float32 are faults. */
export function isSampleFault(v: number): boolean {
  return !(v <= FLOAT32_MAX && v >= -FLOAT32_MAX);
}

/** True when frame i is finite on every channel. */
function frameFinite(data: readonly Float64Array[], i: number): boolean {
  for (let c = 0; c < data.length; c++) if (isSampleFault(data[c][i])) return false;
  return true;
}

/**
 * Splits frames [from, to) into alternating runs of whole finite frames and of frames holding a fault, calling
 * onRun(runFrom, runTo, finite) for each in order. Returns the number of faulty frames. Every consumer of samples
 * (pipeline, analyze, baseline) uses this, so a fault is excluded the same way everywhere: like a gap.
 */
export function forEachFiniteRun(
  data: readonly Float64Array[],
  from: number,
  to: number,
  onRun: (runFrom: number, runTo: number, finite: boolean) => void,
): number {
  let bad = 0;
  let i = from;
  while (i < to) {
    let j = i;
    while (j < to && frameFinite(data, j)) j++;
    if (j > i) onRun(i, j, true);
    if (j >= to) break;
    let k = j;
    while (k < to && !frameFinite(data, k)) k++;
    bad += k - j;
    onRun(j, k, false);
    i = k;
  }
  return bad;
}

export class Conditioner {
  private readonly scales: Float64Array;
  private readonly thresholds: Float64Array;
  private readonly names: string[];
  private readonly fullScale: Float64Array;
  /** Per channel: clipped samples in the last conditioned block, first and last clipped index, peak |raw|. */
  readonly clipCount: Float64Array;
  private readonly clipFirst: Float64Array;
  private readonly clipLast: Float64Array;
  private readonly peak: Float64Array;

  constructor(channels: readonly ChannelInfo[]) {
    if (channels.length === 0) throw new RangeError('Conditioner: the stream has no channels');
    const n = channels.length;
    this.scales = new Float64Array(n);
    this.thresholds = new Float64Array(n);
    this.fullScale = new Float64Array(n);
    this.clipCount = new Float64Array(n);
    this.clipFirst = new Float64Array(n);
    this.clipLast = new Float64Array(n);
    this.peak = new Float64Array(n);
    this.names = channels.map((c) => c.name);
    for (let i = 0; i < n; i++) {
      const c = channels[i];
      if (!Number.isFinite(c.scale) || c.scale <= 0) {
        throw new RangeError(
          `Conditioner: channel ${c.name} has scale ${c.scale}; the descriptor must give a positive unit per count`,
        );
      }
      if (!(c.fullScaleCounts > 0)) {
        throw new RangeError(
          `Conditioner: channel ${c.name} has full scale ${c.fullScaleCounts}; give a positive count or Infinity`,
        );
      }
      this.scales[i] = c.scale;
      this.fullScale[i] = c.fullScaleCounts;
      this.thresholds[i] = c.fullScaleCounts * (1 - CLIP_FRACTION);
    }
  }

  get channelCount(): number {
    return this.scales.length;
  }

  /**
   * Scales raw[start..start+frames) of each channel into out[c][0..frames) and counts clipped samples.
   * Returns how many values came out non-finite (NaN, ±Inf, or beyond float32): the caller must exclude them.
   */
  condition(
    raw: readonly Float64Array[],
    start: number,
    frames: number,
    firstSample: number,
    out: Float64Array[],
  ): number {
    const n = this.scales.length;
    let nonFinite = 0;
    for (let c = 0; c < n; c++) {
      const src = raw[c];
      const dst = out[c];
      const scale = this.scales[c];
      const threshold = this.thresholds[c];
      // Scaling and the peak in separate tight loops (measured faster in V8 than one loop doing both); clipped
      // samples are counted in a third pass only when the peak reaches the threshold, which is rare.
      for (let i = 0; i < frames; i++) dst[i] = Math.fround(src[start + i] * scale);
      // x − x is 0 for every finite x and NaN for NaN and ±Inf: one subtraction per sample finds them all.
      let sum = 0;
      for (let i = 0; i < frames; i++) sum += dst[i] - dst[i];
      if (sum !== 0) for (let i = 0; i < frames; i++) if (dst[i] - dst[i] !== 0) nonFinite++;
      let peak = 0;
      for (let i = 0; i < frames; i++) {
        const a = Math.abs(src[start + i]);
        peak = a > peak ? a : peak;
      }
      let count = 0;
      let first = -1;
      let last = -1;
      if (peak >= threshold) {
        for (let i = 0; i < frames; i++) {
          const v = src[start + i];
          if (dst[i] - dst[i] !== 0) continue; // a non-finite value is a fault, not a clip
          if (v >= threshold || v <= -threshold) {
            if (count === 0) first = i;
            last = i;
            count++;
          }
        }
      }
      this.clipCount[c] = count;
      this.clipFirst[c] = first < 0 ? -1 : firstSample + first;
      this.clipLast[c] = last < 0 ? -1 : firstSample + last;
      this.peak[c] = peak;
    }
    return nonFinite;
  }

  /** Names of the channels whose value is non-finite somewhere in out[c][from..to). */
  nonFiniteChannels(out: readonly Float64Array[], from: number, to: number): string[] {
    const names: string[] = [];
    for (let c = 0; c < this.names.length; c++) {
      for (let i = from; i < to; i++) {
        if (out[c][i] - out[c][i] !== 0) {
          names.push(this.names[c]);
          break;
        }
      }
    }
    return names;
  }

  /** The clip notice of channel c for the last conditioned block, or undefined if nothing clipped. */
  clipNotice(c: number): ClipNotice | undefined {
    if (this.clipCount[c] === 0) return undefined;
    return {
      channel: this.names[c],
      channelIndex: c,
      firstSample: this.clipFirst[c],
      lastSample: this.clipLast[c],
      count: this.clipCount[c],
      peakCounts: this.peak[c],
      fullScaleCounts: this.fullScale[c],
    };
  }
}
