// Analysis settings shared by the live pipeline, analyze, baselines and the dashboard.
// Pure TypeScript: the dashboard imports it too. The averaging and detrend vocabularies belong to dsp/.
import type { AveragingSpec } from '../dsp/averaging.ts';
import type { DetrendMode } from '../dsp/detrend.ts';

export type { AveragingSpec, DetrendMode };
/** The segment lengths the analysis takes, part of the settings contract (clients are held to them too). */
export { MAX_SEGMENT, MIN_SEGMENT } from '../dsp/welch.ts';

export interface AnalysisSettings {
  sampleRate: number;
  segment: number;
  /** Canonical window name, e.g. "hann", "kaiser:3". */
  window: string;
  overlap: number;
  detrend: DetrendMode;
}

/** The fields that must match for two spectra to be compared bin by bin (averaging may differ). */
export const COMPARABLE_SETTINGS = ['sampleRate', 'segment', 'window', 'overlap', 'detrend'] as const;

/** A short stable hash of the comparable settings (FNV-1a 32-bit over their canonical JSON). */
export function settingsHash(s: AnalysisSettings): string {
  const canonical = JSON.stringify(COMPARABLE_SETTINGS.map((k) => [k, s[k]]));
  let h = 0x811c9dc5;
  for (let i = 0; i < canonical.length; i++) {
    h ^= canonical.charCodeAt(i);
    h = Math.imul(h, 0x01000193) >>> 0;
  }
  return h.toString(16).padStart(8, '0');
}

/** Names the first setting that differs, or undefined when the two are comparable. */
export function firstSettingMismatch(a: AnalysisSettings, b: AnalysisSettings): string | undefined {
  for (const k of COMPARABLE_SETTINGS) if (a[k] !== b[k]) return `${k} (${String(a[k])} vs ${String(b[k])})`;
  return undefined;
}
