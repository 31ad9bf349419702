// SpurFinder's maxima scan as it was before the one-pass scan: every bin tested against its ±L neighbours, then the
// lower bound on the median taken with comparisons. Kept frozen as the oracle the faster scan must match bit for
// bit, and as the benchmark's reference. What follows a surviving maximum (median, lobe sum, slots) is shared.
import { SpurFinder } from '../../dsp/detection/spur-finder.ts';

export class PlainScanSpurFinder extends SpurFinder {
  override find(psd: Float64Array, ratio: number): number {
    if (psd.length < this.bins) throw new RangeError(`SpurFinder.find: psd needs ${this.bins} bins, got ${psd.length}`);
    if (!(ratio > 1)) throw new RangeError(`SpurFinder.find: ratio must be > 1, got ${ratio}`);
    const hw = this.median.halfWidth;
    const n = this.bins;
    const L = this.lobe;
    let count = 0;
    for (let k = this.firstBin; k <= this.lastBin; k++) {
      const p = psd[k];
      let isPeak = true;
      for (let j = k - L; j <= k + L; j++) {
        if (psd[j] > p || (psd[j] === p && j < k)) {
          isPeak = false;
          break;
        }
      }
      if (!isPeak) continue;
      if (k >= hw && k + hw < n) {
        let lb = Infinity;
        for (let d = hw, taken = 0; taken <= hw; d--, taken += 2) {
          const a = psd[k - d];
          const b = psd[k + d];
          if (a < lb) lb = a;
          if (b < lb) lb = b;
        }
        if (!(p > ratio * lb)) continue;
      }
      count = this.consider(psd, k, ratio, count);
    }
    return count;
  }
}
