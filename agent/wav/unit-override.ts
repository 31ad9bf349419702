// `--unit U` for a file whose samples read as FS (a float WAV from another tool, already in volts, say): names the
// unit of those channels. A channel whose metadata already names another unit is refused, naming the channel.

/** Renames FS channels to `unit`; returns the message for a channel already in another unit, or null. */
export function applyUnitOverride(
  channels: { name: string; unit: string }[],
  unit: string | undefined,
  path: string,
): string | null {
  if (unit === undefined) return null;
  for (const ch of channels) {
    if (ch.unit === 'FS') ch.unit = unit;
    else if (ch.unit !== unit)
      return `--unit ${unit}: channel ${ch.name} of ${path} is already in ${ch.unit} by its metadata; drop --unit or fix the metadata.`;
  }
  return null;
}
