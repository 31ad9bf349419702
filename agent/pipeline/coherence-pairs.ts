// Which channel pairs the live analysis computes cross-spectra for: every pair when a stream has 2 to 4 channels
// (at most 6 pairs), else only the pairs named "A:B" by channel name or 0-based index, as `analyze --coherence`.
import type { StreamInfo } from '../../protocol/stream.ts';

/** 'auto': every pair of 2–4 channels; 'off': none; a list: these "A:B" pairs. */
export type CoherencePairsSpec = 'auto' | 'off' | readonly string[];

/** Most channels for which 'auto' takes every pair. */
export const AUTO_PAIRS_MAX_CHANNELS = 4;

export function resolveCoherencePairs(spec: CoherencePairsSpec, info: StreamInfo): [number, number][] {
  const names = info.channels.map((c) => c.name);
  if (spec === 'off') return [];
  if (spec === 'auto') {
    if (names.length < 2 || names.length > AUTO_PAIRS_MAX_CHANNELS) return [];
    const out: [number, number][] = [];
    for (let a = 0; a < names.length; a++) for (let b = a + 1; b < names.length; b++) out.push([a, b]);
    return out;
  }
  const pick = (s: string, pair: string): number => {
    const byName = names.indexOf(s);
    if (byName >= 0) return byName;
    if (/^\d+$/.test(s) && Number(s) < names.length) return Number(s);
    throw new RangeError(
      `coherence pair "${pair}": no channel "${s}" in the stream (channels: ${names.join(', ')}); name two channels or 0-based indices`,
    );
  };
  const out: [number, number][] = [];
  for (const pair of spec) {
    const parts = pair.split(':');
    if (parts.length !== 2) throw new RangeError(`coherence pair "${pair}": write it as A:B (two channels)`);
    const a = pick(parts[0], pair);
    const b = pick(parts[1], pair);
    if (a === b) throw new RangeError(`coherence pair "${pair}": names one channel twice; name two different channels`);
    if (!out.some(([x, y]) => (x === a && y === b) || (x === b && y === a))) out.push([a, b]);
  }
  return out;
}
