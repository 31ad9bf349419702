// A SHA-256 over every snapshot's sample index and density bytes, in order: two runs whose digests are equal
// produced bit-identical spectra at the same sample instants (the replay determinism check).
import { createHash, type Hash } from 'node:crypto';
import type { SpectrumSnapshot } from './types.ts';

export class SnapshotDigest {
  private readonly hash: Hash = createHash('sha256');
  private readonly index = new Float64Array(1);
  count = 0;

  add(s: SpectrumSnapshot): void {
    this.index[0] = s.sample;
    this.hash.update(new Uint8Array(this.index.buffer));
    for (const c of s.channels) this.hash.update(new Uint8Array(c.psd.buffer, c.psd.byteOffset, c.psd.byteLength));
    this.count++;
  }

  hex(): string {
    return this.hash.copy().digest('hex');
  }
}

/** One snapshot as a JSON line (exact: JSON numbers round-trip doubles; NaN before the first segment → null). */
export function snapshotToJsonLine(s: SpectrumSnapshot): string {
  return JSON.stringify({
    sample: s.sample,
    t: s.t,
    wallTime: s.wallTime,
    settings: s.settings,
    averaging: s.averaging,
    binHz: s.binHz,
    channels: s.channels.map((c) => ({
      name: c.name,
      unit: c.unit,
      segmentsUsed: c.segmentsUsed,
      equivalentAverages: c.equivalentAverages,
      lastSegmentSample: c.lastSegmentSample,
      psd: Array.from(c.psd),
    })),
    ...(s.coherence
      ? {
          coherence: s.coherence.map((p) => ({
            a: p.a,
            b: p.b,
            segmentsUsed: p.segmentsUsed,
            equivalentAverages: p.equivalentAverages,
            coherence: Array.from(p.coherence),
            csdRe: Array.from(p.csdRe),
            csdIm: Array.from(p.csdIm),
          })),
        }
      : {}),
  });
}
