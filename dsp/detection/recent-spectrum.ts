// A short-window estimate beside the long one, recovered from the long one's successive snapshots, so the alarm
// rules can stamp a fault's end (and read its settled level) within seconds instead of waiting for a long
// exponential average to decay. No second FFT and no pipeline change: for an exponential average
//   E_b = r^m·E_a + Σ_{j=1..m} α·r^{m−j}·P_j      (r = 1 − α, m segments added between snapshots a and b),
// so the m newest segments' weighted mean is (E_b − r^m·E_a) / (1 − r^m) exactly (weights α·r^{m−j}, newest 1,
// oldest r^{m−1}). For a plain mean, (n_b·E_b − n_a·E_a) / m is the equal-weight mean of those m segments.
// Rolling and median averages already forget; their own estimate is the recent one (window = their count), and
// max-hold never forgets (window = every segment). Only the snapshots that can still be the far end of the window
// are kept: at 1 MS/s one snapshot brings ~50 segments, so a 3 s window needs ~30 of them, not one slot per segment
// (which was 24 MiB per channel, touched page by page over minutes). Push reuses dropped slots once warmed up.
import type { AveragingSpec } from '../averaging.ts';

export interface RecentSpectrumOptions {
  bins: number;
  averaging: AveragingSpec;
  segment: number;
  step: number;
  sampleRate: number;
  /** Segments in the recent window. */
  windowSegments: number;
  /** overlapRho(window, step): correlation of overlapping segments' powers (dsp/welch.ts). */
  rho: Float64Array;
}

export class RecentSpectrum {
  /** The recent estimate after the last push (same scaling as the long one). */
  readonly psd: Float64Array;
  /** Segments in the recent estimate (0 before the first push). */
  segments = 0;
  /** Equivalent independent averages of the recent estimate (overlap-corrected, Welch 1967). */
  equivalentAverages = 0;
  private readonly bins: number;
  private readonly mode: AveragingSpec['mode'];
  private readonly r: number;
  private readonly windowSegments: number;
  /** Earlier snapshots' long estimates (oldest first) that may still be the far end of the window. */
  private readonly kept: { psd: Float64Array; used: number }[] = [];
  /** Slots dropped from `kept`, reused by the next pushes. */
  private readonly spare: { psd: Float64Array; used: number }[] = [];
  private readonly keqCache: Float64Array;
  /** Segments in the newest snapshot pushed (−1: none since the last clear). */
  private lastUsed = -1;

  constructor(private readonly o: RecentSpectrumOptions) {
    const { bins, averaging, windowSegments } = o;
    if (!Number.isInteger(windowSegments) || windowSegments < 1)
      throw new RangeError(`RecentSpectrum: windowSegments must be a positive integer, got ${windowSegments}`);
    this.bins = bins;
    this.mode = averaging.mode;
    const alpha = averaging.mode === 'exponential' ? 1 - Math.exp(-o.step / (o.sampleRate * averaging.tauSeconds)) : 0;
    this.r = 1 - alpha;
    const count = averaging.mode === 'rolling' || averaging.mode === 'median' ? averaging.count : Infinity;
    this.windowSegments = Math.min(windowSegments, count);
    this.psd = new Float64Array(bins);
    this.keqCache = new Float64Array(Math.max(this.windowSegments, 1) + 1);
  }

  /** Samples the recent estimate spans back from the end of its newest segment (inclusive of both ends). */
  get spanSamples(): number {
    return this.segments > 0 ? this.o.segment + (this.segments - 1) * this.o.step : 0;
  }

  /** Earlier snapshots held for the window (bounded by the window's span in snapshots, plus one). */
  get keptSnapshots(): number {
    return this.kept.length;
  }

  clear(): void {
    this.spare.push(...this.kept);
    this.kept.length = 0;
    this.lastUsed = -1;
    this.segments = 0;
    this.equivalentAverages = 0;
  }

  /** Feeds the long estimate of one snapshot and the number of segments in it; updates psd and segments. */
  push(longPsd: Float64Array, segmentsUsed: number): void {
    const bins = this.bins;
    if (segmentsUsed < this.lastUsed) this.clear(); // the long average restarted (a loop seam, new settings)
    if (segmentsUsed === this.lastUsed) return; // no new segment: nothing changes
    this.lastUsed = segmentsUsed;
    const out = this.psd;
    if (this.mode !== 'exponential' && this.mode !== 'mean') {
      out.set(longPsd.subarray(0, bins));
      this.setSegments(Math.min(segmentsUsed, this.windowSegments), true);
      return;
    }
    // The newest earlier snapshot at least windowSegments back; none: the whole long estimate is recent enough.
    const kept = this.kept;
    let then = -1;
    for (let i = kept.length - 1; i >= 0; i--) {
      if (segmentsUsed - kept[i].used >= this.windowSegments) {
        then = i;
        break;
      }
    }
    if (then < 0 || segmentsUsed <= this.windowSegments) {
      // The first segment initialises an exponential average, so E itself is a proper weighted mean of all segments.
      out.set(longPsd.subarray(0, bins));
      this.setSegments(segmentsUsed, this.mode === 'mean');
    } else {
      const m = segmentsUsed - kept[then].used;
      const earlier = kept[then].psd;
      if (this.mode === 'mean') {
        const a = kept[then].used;
        for (let k = 0; k < bins; k++) out[k] = (segmentsUsed * longPsd[k] - a * earlier[k]) / m;
      } else {
        const rm = this.r ** m;
        const inv = 1 / (1 - rm);
        for (let k = 0; k < bins; k++) {
          const v = (longPsd[k] - rm * earlier[k]) * inv;
          out[k] = v > 0 ? v : 0; // rounding on a zero bin must not give a negative density
        }
      }
      this.setSegments(m, this.mode === 'mean');
    }
    // Segment counts only grow, so a snapshot older than `then` can never be the far end again: drop it.
    if (then > 0) this.spare.push(...kept.splice(0, then));
    const slot = this.spare.pop() ?? { psd: new Float64Array(bins), used: 0 };
    slot.psd.set(longPsd.subarray(0, bins));
    slot.used = segmentsUsed;
    kept.push(slot);
  }

  private setSegments(m: number, equal: boolean): void {
    this.segments = m;
    if (m < this.keqCache.length && this.keqCache[m] > 0) {
      this.equivalentAverages = this.keqCache[m];
      return;
    }
    const k = weightedEquivalent(m, equal ? 1 : this.r, this.o.rho);
    if (m < this.keqCache.length) this.keqCache[m] = k;
    this.equivalentAverages = k;
  }
}

/**
 * (Σu)² / Σ_i Σ_j u_i u_j ρ(|i−j|·step) for weights u_j = r^j over m segments (r = 1: equal weights): the number of
 * independent averages with the same variance (Welch 1967; Heinzel 2002 §10).
 */
export function weightedEquivalent(m: number, r: number, rho: Float64Array): number {
  if (m <= 0) return 0;
  let sum = 0;
  let sq = 0;
  for (let j = 0; j < m; j++) {
    const u = r ** j;
    sum += u;
    sq += u * u;
  }
  let cross = 0;
  for (let d = 1; d <= Math.min(rho.length, m - 1); d++) {
    let s = 0;
    for (let j = 0; j + d < m; j++) s += r ** j * r ** (j + d);
    cross += 2 * rho[d - 1] * s;
  }
  return (sum * sum) / (sq + cross);
}
