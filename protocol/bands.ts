// The text form of a band, LO:HI in Hz with 0 ≤ LO < HI ≤ Nyquist: --band, the rig config's bands, the rules
// file and the trend API all read it with this one parser.
export interface Band {
  low: number;
  high: number;
}

/** Parses "LO:HI"; throws RangeError with a sentence naming the band and the fix. */
export function parseBand(text: string, nyquist = Infinity): Band {
  const parts = text.split(':');
  const low = parts.length === 2 && parts[0].trim() !== '' ? Number(parts[0]) : NaN;
  const high = parts.length === 2 && parts[1].trim() !== '' ? Number(parts[1]) : NaN;
  if (!Number.isFinite(low) || !Number.isFinite(high)) {
    throw new RangeError(`--band '${text}' is not LO:HI in Hz; write e.g. --band 20:2000`);
  }
  if (low < 0) throw new RangeError(`--band ${text}: LO must be ≥ 0 Hz; write e.g. --band 0:${high}`);
  if (low >= high)
    throw new RangeError(
      `--band ${text}: LO must be below HI; write e.g. --band ${Math.min(low, high)}:${Math.max(low, high) || 1}`,
    );
  if (high > nyquist) {
    throw new RangeError(
      `--band ${text}: HI is above the Nyquist frequency ${nyquist} Hz of this file; give HI ≤ ${nyquist}`,
    );
  }
  return { low, high };
}
