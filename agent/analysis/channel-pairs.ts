// --coherence A:B: a pair of channels by name or 0-based index, refused when unknown or the same channel twice.
import { AnalysisInputError } from './input-error.ts';

export interface ChannelPair {
  a: number;
  b: number;
}

function channelIndex(token: string, names: readonly string[], text: string): number {
  const byName = names.indexOf(token);
  if (byName >= 0) return byName;
  if (/^\d+$/.test(token) && Number(token) < names.length) return Number(token);
  throw new AnalysisInputError(
    `--coherence ${text}: no channel '${token}'; the channels are ${names.map((n, i) => `${i}=${n}`).join(', ')}.`,
  );
}

export function resolveChannelPairs(texts: readonly string[], names: readonly string[]): ChannelPair[] {
  return texts.map((text) => {
    const parts = text.split(':');
    if (parts.length !== 2 || parts[0] === '' || parts[1] === '') {
      throw new AnalysisInputError(
        `--coherence '${text}' is not A:B; write two channel names or 0-based indices, e.g. --coherence ${names[0] ?? 'ch0'}:${names[1] ?? 'ch1'}.`,
      );
    }
    const a = channelIndex(parts[0], names, text);
    const b = channelIndex(parts[1], names, text);
    if (a === b)
      throw new AnalysisInputError(
        `--coherence ${text}: both sides are channel ${names[a]}; name two different channels.`,
      );
    return { a, b };
  });
}
