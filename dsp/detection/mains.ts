// Mains tracker and harmonic classifier. The supply frequency stays within ±0.2 Hz of 50 or 60 Hz in normal
// operation (EN 50160: 50 Hz ± 1 % for 99.5 % of a year on interconnected grids; the tighter ±0.2 Hz is typical
// practice for synchronous grids, used here as the accepted range; both from memory). The nominal is picked once:
// the configured 50 or 60, else (auto) the first of the two with a line at order k = 1, 2 or 3 whose f/k lies
// within ±0.2 Hz of it; it never changes afterwards, so a strong unrelated tone (a 120 Hz overload on a 50 Hz
// rig) cannot move the tracker to the other grid. Mains counts as present only with such a low-order line (a lone
// line near 700 Hz is as likely an unrelated tone as a 14th harmonic). The fundamental is measured from the
// strongest of those lines divided by its order and accepted only within ±0.2 Hz of the nominal (plus the line
// estimate's error, 0.05 Hz at the line: see lowOrderInRange); a line is then
// classified as harmonic k when |f − k·f0| ≤ Δf/2 + k·δ: the tolerance widens with k because an error δ in f0
// grows k-fold at the k-th harmonic.

export type MainsSetting = 'auto' | 50 | 60;

/** Accepted half-range of the measured fundamental around the nominal, Hz. */
export const MAINS_RANGE_HZ = 0.2;
/** Mains counts as present only with a line at one of these low orders. */
export const PRESENCE_MAX_ORDER = 3;
/** Per-order tolerance once f0 has been measured from a line (interpolated frequency error), Hz. */
export const MEASURED_F0_TOLERANCE_HZ = 0.05;

export interface MainsOptions {
  setting: MainsSetting;
  binHz: number;
  /** Highest harmonic order classified (default 40). */
  maxHarmonic?: number;
}

export class MainsClassifier {
  readonly setting: MainsSetting;
  readonly binHz: number;
  readonly maxHarmonic: number;
  /** The nominal in force: the configured one, else 0 until auto-detection picks 50 or 60 (then fixed). */
  nominal: 0 | 50 | 60;
  /** Measured fundamental of the last classify(), Hz; 0 when no mains line was seen. */
  fundamental = 0;
  /** True when mains was found (then `fundamental` is measured from a line). */
  measured = false;
  /** Harmonic order per line of the last classify() (0 = not mains). */
  readonly harmonic: Int32Array;
  private evidence: Uint8Array | undefined;
  /** RMS totals over classified lines: all harmonics, odd k, even k (unit RMS). */
  total = 0;
  odd = 0;
  even = 0;

  constructor(o: MainsOptions, maxLines: number) {
    if (o.setting !== 'auto' && o.setting !== 50 && o.setting !== 60) {
      throw new RangeError(`MainsClassifier: setting must be auto, 50 or 60, got ${String(o.setting)}`);
    }
    if (!(o.binHz > 0)) throw new RangeError(`MainsClassifier: binHz must be > 0, got ${o.binHz}`);
    this.setting = o.setting;
    this.binHz = o.binHz;
    this.maxHarmonic = o.maxHarmonic ?? 40;
    this.nominal = o.setting === 'auto' ? 0 : o.setting;
    this.harmonic = new Int32Array(maxLines);
  }

  /**
   * Classifies `count` lines (frequency, rms amplitude). Sets fundamental, harmonic[], totals. `evidence[i]` = 0
   * leaves line i out of picking the nominal and measuring the fundamental (e.g. an overload's products, which
   * prove nothing about the grid); it may still be classified against a fundamental measured from other lines.
   */
  classify(freq: Float64Array, amp: Float64Array, count: number, evidence?: Uint8Array): void {
    this.evidence = evidence;
    if (this.nominal === 0) {
      const s50 = this.score(50, freq, amp, count);
      const s60 = this.score(60, freq, amp, count);
      if (s50 === 0 && s60 === 0) {
        this.reset(count);
        return;
      }
      this.nominal = s60 > s50 ? 60 : 50;
    }
    const f0 = this.measure(this.nominal, freq, amp, count);
    if (f0 === 0) {
      this.reset(count);
      return;
    }
    this.measured = true;
    this.fundamental = f0;
    const delta = MEASURED_F0_TOLERANCE_HZ;
    let total = 0;
    let odd = 0;
    let even = 0;
    for (let i = 0; i < count; i++) {
      const k = harmonicOrder(freq[i], this.fundamental, this.binHz, delta, this.maxHarmonic);
      this.harmonic[i] = k;
      if (k === 0) continue;
      const p = amp[i] * amp[i];
      total += p;
      if (k & 1) odd += p;
      else even += p;
    }
    this.total = Math.sqrt(total);
    this.odd = Math.sqrt(odd);
    this.even = Math.sqrt(even);
  }

  private reset(count: number): void {
    this.fundamental = 0;
    this.measured = false;
    for (let i = 0; i < count; i++) this.harmonic[i] = 0;
    this.total = this.odd = this.even = 0;
  }

  /** Line power at the low orders (1..3) of a nominal frequency within the accepted range. */
  private score(nominal: number, freq: Float64Array, amp: Float64Array, count: number): number {
    let s = 0;
    for (let i = 0; i < count; i++) {
      if (this.evidence && !this.evidence[i]) continue;
      if (lowOrderInRange(freq[i], nominal) > 0) s += amp[i] * amp[i];
    }
    return s;
  }

  /** f0 from the strongest line at a low order (1..3) whose f/k is within range of the nominal; 0 if none. */
  private measure(nominal: number, freq: Float64Array, amp: Float64Array, count: number): number {
    let best = -1;
    let bestK = 0;
    for (let i = 0; i < count; i++) {
      if (this.evidence && !this.evidence[i]) continue;
      const k = lowOrderInRange(freq[i], nominal);
      if (k > 0 && (best < 0 || amp[i] > amp[best])) {
        best = i;
        bestK = k;
      }
    }
    return best < 0 ? 0 : freq[best] / bestK;
  }
}

/**
 * k in 1..3 when |f − k·nominal| ≤ k·MAINS_RANGE_HZ + MEASURED_F0_TOLERANCE_HZ, else 0: the grid's own offset
 * grows k-fold at harmonic k, the error of a line's frequency estimate does not (so f/k may sit up to
 * 0.2 + 0.05/k Hz from the nominal).
 */
export function lowOrderInRange(f: number, nominal: number): number {
  const k = Math.round(f / nominal);
  if (k < 1 || k > PRESENCE_MAX_ORDER) return 0;
  return Math.abs(f - k * nominal) <= k * MAINS_RANGE_HZ + MEASURED_F0_TOLERANCE_HZ ? k : 0;
}

/** k when |f − k·f0| ≤ binHz/2 + k·delta for some 1 ≤ k ≤ maxK, else 0. */
export function harmonicOrder(f: number, f0: number, binHz: number, delta: number, maxK: number): number {
  const k = Math.round(f / f0);
  if (k < 1 || k > maxK) return 0;
  return Math.abs(f - k * f0) <= binHz / 2 + k * delta ? k : 0;
}
