// Clipped and missing samples of a recording, for the offline report: a sample clips when |x| ≥ (1 − 0.001)·full
// scale (the live conditioner's rule, CLIP_FRACTION); a non-finite sample (NaN, ±Inf) counts as missing. The union
// over channels is kept as sorted runs, so segments that touch one can be left out of every channel's average.
import { CLIP_FRACTION } from '../pipeline/conditioner.ts';
import { fullScaleCounts } from '../wav/format.ts';
import type { WavChannel, WavInfo } from '../wav/reader.ts';

export interface ChannelClips {
  count: number;
  /** Absolute sample index of the first and last clipped sample, −1 when none. */
  first: number;
  last: number;
  /** Non-finite samples. */
  missing: number;
}

/** Full scale of a channel in its unit, or Infinity when unknown. */
export function channelFullScale(ch: WavChannel, info: WavInfo): number {
  if (ch.fullScaleCounts !== undefined) {
    const m = info.metadata?.channels.find((c) => c.name === ch.name);
    // Our float recordings store volts: full scale in volts is counts × volts per count.
    if (!info.format.encoding.startsWith('int') && m?.scale !== undefined) return ch.fullScaleCounts * m.scale;
    return ch.fullScaleCounts * ch.factor;
  }
  if (info.format.encoding.startsWith('int')) return ch.factor * fullScaleCounts(info.format.encoding);
  // A float file from elsewhere reads as a fraction of full scale (FS): ±1, times --scale when given.
  return ch.unit === 'FS' || info.metadataFrom === 'none' ? ch.factor : Infinity;
}

/** One converter step in the channel unit: our metadata's unit per count, or an integer PCM code; else undefined. */
export function channelLsb(ch: WavChannel, info: WavInfo): number | undefined {
  if (info.format.encoding.startsWith('int')) return ch.factor;
  const m = info.metadata?.channels.find((c) => c.name === ch.name);
  return m?.scale !== undefined && m.unit === ch.unit ? m.scale : undefined;
}

export class ClipScan {
  readonly channels: ChannelClips[];
  /** Union of bad samples over channels: runs [start, end] (inclusive, absolute indices), in order. */
  readonly runStart: number[] = [];
  readonly runEnd: number[] = [];
  private readonly thresholds: Float64Array;

  constructor(fullScales: readonly number[]) {
    this.thresholds = Float64Array.from(fullScales, (f) => f * (1 - CLIP_FRACTION));
    this.channels = fullScales.map(() => ({ count: 0, first: -1, last: -1, missing: 0 }));
  }

  /** Scans one block of every channel; call before the block's samples are analysed. */
  scan(data: readonly Float64Array[], frames: number, firstSample: number): void {
    let bad: Uint8Array | undefined;
    for (let c = 0; c < data.length; c++) {
      const x = data[c];
      const t = this.thresholds[c];
      let hit = false;
      for (let i = 0; i < frames; i++) {
        const v = x[i];
        if (!(v < t && v > -t)) {
          hit = true;
          break;
        }
      }
      if (!hit) continue;
      bad ??= new Uint8Array(frames);
      const s = this.channels[c];
      for (let i = 0; i < frames; i++) {
        const v = x[i];
        if (v < t && v > -t) continue;
        bad[i] = 1;
        if (!Number.isFinite(v)) s.missing++;
        else {
          s.count++;
          if (s.first < 0) s.first = firstSample + i;
          s.last = firstSample + i;
        }
      }
    }
    if (bad) this.addRuns(bad, firstSample);
  }

  private addRuns(bad: Uint8Array, firstSample: number): void {
    for (let i = 0; i < bad.length; i++) {
      if (!bad[i]) continue;
      let j = i;
      while (j + 1 < bad.length && bad[j + 1]) j++;
      const start = firstSample + i;
      const n = this.runEnd.length;
      if (n > 0 && this.runEnd[n - 1] === start - 1) this.runEnd[n - 1] = firstSample + j;
      else {
        this.runStart.push(start);
        this.runEnd.push(firstSample + j);
      }
      i = j;
    }
  }

  /** Clipped or missing samples on any channel. */
  get total(): number {
    return this.channels.reduce((s, c) => s + c.count + c.missing, 0);
  }

  /**
   * A segment filter for one consumer: true when [first, last] touches no bad sample. Each consumer needs its own
   * (it keeps a cursor into the runs; segment starts only move forward).
   */
  makeAccept(): (first: number, last: number) => boolean {
    let p = 0;
    return (first, last) => {
      const ends = this.runEnd;
      while (p < ends.length && ends[p] < first) p++;
      return !(p < ends.length && this.runStart[p] <= last);
    };
  }
}
