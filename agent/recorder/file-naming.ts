// Recording file names: PREFIX-YYYYMMDDTHHMMSSZ-sFIRSTSAMPLE.wav. The wall time is a label for people; the
// first sample index makes the name unique within a run and orders rotated files (their sidecars carry it too).
export function recordingFileName(prefix: string, wallTime: string, firstSample: number): string {
  const compact = wallTime.replace(/[-:]/g, '').replace(/\.\d+Z$/, 'Z');
  return `${prefix}-${compact}-s${firstSample}.wav`;
}

/** Makes a label usable in a file name (letters, digits, dot, dash, underscore). */
export function safeLabel(label: string): string {
  const s = label
    .replace(/[^A-Za-z0-9._-]+/g, '_')
    .replace(/^[._]+/, '')
    .slice(0, 48);
  return s || 'capture';
}
