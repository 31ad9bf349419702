// Payloads of the live low-frequency view (agent → dashboard): a context with what stays fixed per stream
// (frequencies, resolution bandwidth per point) and updates stamped in sample time. Pure types (the dashboard
// imports them). JSON carries no NaN: a point without a completed segment yet is null.
import type { PeakToPeakFigures } from '../dsp/flicker/peak-to-peak.ts';

/** Sent once per stream (and again if the rate or channels change). */
export interface LowFrequencyContext {
  /** Increments on every change; updates carry it. */
  id: number;
  sampleRate: number;
  channels: { name: string; unit: string }[];
  /** Log-spaced frequencies, Hz, and each point's resolution bandwidth (ENBW of its segment), Hz. */
  frequency: number[];
  rbwHz: number[];
  /** Confidence level of the ASD band (chi-square on the equivalent averages). */
  level: number;
  /** Sample time each point averages over, seconds. */
  spanSeconds: number;
  /** Updates per second of sample time, and one corner fit every `fitEvery` updates. */
  updatesPerSecond: number;
  fitEvery: number;
  /** The corner fit uses points at or below this frequency, Hz. */
  fitMaxHz: number;
  /** Peak-to-peak band edges and observation window. */
  peakToPeak: { lowHz: number; highHz: number; windowSeconds: number; settleSeconds: number } | null;
}

/** 1/f fit S(f) = e_w²·(1 + (f_c/f)^α) of one channel, with standard uncertainties. */
export interface CornerFitReading {
  /** Sample index (and t) of the frame it was fitted to. */
  sample: number;
  t: number;
  whiteAsd: number;
  whiteAsdSigma: number;
  corner: number;
  cornerSigma: number;
  exponent: number;
  exponentSigma: number;
  /** False when the free-α fit failed and α was held at 1. */
  exponentFree: boolean;
  reducedChiSquare: number;
  points: number;
  /** Points left out as lines (more than 4σ above the model in log space). */
  excludedPoints: number;
}

/** The newest completed 0.1–10 Hz window of one channel. */
export type { PeakToPeakFigures };

export interface LowFrequencyChannelUpdate {
  name: string;
  /** unit/√Hz per point, and the confidence band. */
  asd: (number | null)[];
  lower: (number | null)[];
  upper: (number | null)[];
  /** Segments averaged per point. */
  averages: number[];
  fit: CornerFitReading | null;
  peakToPeak: PeakToPeakFigures | null;
}

export interface LowFrequencyUpdate {
  contextId: number;
  /** Index of the last sample in the estimate; t = sample / sampleRate. */
  sample: number;
  t: number;
  channels: LowFrequencyChannelUpdate[];
}

/** Per channel in GET /api/status: the figures, not the curve. */
export interface LowFrequencyStatus {
  channel: string;
  unit: string;
  sample: number;
  t: number;
  fit: CornerFitReading | null;
  peakToPeak: PeakToPeakFigures | null;
}
