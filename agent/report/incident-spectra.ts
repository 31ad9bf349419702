// The spectrum of each incident at its settled time, from the incident's capture WAV: the Welch mean (the run's
// window, segment, overlap and detrend, through the same analyzeFile `floorline analyze` uses) over the samples
// from the incident's start to its settled sample, at least one segment ending there. That is the data the
// settled estimate holds (post-onset only). Incidents without a settled event use their peak sample, then their end.
import { existsSync } from 'node:fs';
import { isAbsolute, join } from 'node:path';
import { analyzeFile } from '../analysis/report.ts';
import { WavReader } from '../wav/reader.ts';
import type { AnalysisSettings } from '../../protocol/settings.ts';
import type { ReportIncident } from './collect.ts';

export interface IncidentSpectrum {
  /** Samples [from, to) of the estimate, and its number of segments. */
  from: number;
  to: number;
  segments: number;
  frequency: Float64Array;
  /** One-sided density of the incident's channel, unit²/Hz. */
  psd: Float64Array;
}

/** At most this many incidents are listed one by one (a span of months can hold thousands): the report stays
 *  bounded, and the rest are counted by rule and channel. */
export const MAX_INCIDENT_ROWS = 500;

/** At most this many incidents get a spectrum (each reads a few seconds of its capture). */
export const MAX_INCIDENT_SPECTRA = 200;

/** The sample the incident's spectrum ends at: settled, else peak, else end, else start. */
export function judgedSample(i: ReportIncident): number {
  return i.settledSample ?? i.peak?.sample ?? i.end?.sample ?? i.start.sample;
}

/** The capture file of an incident on disk, or undefined (no capture, or the file is gone). */
export function capturePath(i: ReportIncident, dataDir: string | undefined): string | undefined {
  if (!i.capture) return undefined;
  const p = isAbsolute(i.capture) ? i.capture : dataDir ? join(dataDir, i.capture) : undefined;
  return p && existsSync(p) ? p : undefined;
}

/** The incident's spectrum, or a sentence saying why there is none. */
export async function incidentSpectrum(
  i: ReportIncident,
  path: string | undefined,
  settings: AnalysisSettings,
): Promise<IncidentSpectrum | string> {
  if (!i.capture) return 'no capture was kept for this incident';
  if (!path) return `its capture ${i.capture} is not in the data folder (removed by retention?)`;
  const reader = await WavReader.open(path);
  const { firstSample, frames, sampleRate } = reader.info;
  await reader.close();
  if (sampleRate !== settings.sampleRate)
    return `its capture runs at ${sampleRate} S/s, the run at ${settings.sampleRate} S/s`;
  const end = Math.min(judgedSample(i) + 1, firstSample + frames);
  const from = Math.max(firstSample, Math.min(i.start.sample, end - settings.segment));
  if (end - from < settings.segment) return `its capture holds less than one segment before sample ${end - 1}`;
  const { report } = await analyzeFile(path, {
    segment: settings.segment,
    window: settings.window,
    overlap: settings.overlap,
    detrend: settings.detrend,
    bands: [],
    from: String(from / sampleRate),
    to: String(end / sampleRate),
  });
  const ch = report.channels.find((c) => c.name === i.channel);
  if (!ch) return `its capture has no channel ${i.channel}`;
  return { from, to: end, segments: report.settings.averages, frequency: ch.frequency, psd: ch.psd };
}
