// Kept spectra, as /api/spectra and /api/spectrum give them. Pure types: the dashboard imports them. A density is
// unit²/Hz on `density.length` log-spaced points from fLow to fHigh (dsp/log-grid.ts), each the largest bin
// density of its cell.

export interface StoredSpectrumJson {
  t: number;
  sample: number;
  wallTime: string;
  fLow: number;
  fHigh: number;
  density: number[];
}

/** GET /api/spectra?channel=&from=&to=&rows=N: oldest first; more rows than N are merged (pointwise max). */
export interface SpectraReply {
  channel: string;
  unit: string;
  /** Rows merged into one (1: as stored). */
  merged: number;
  rows: StoredSpectrumJson[];
}

/** GET /api/spectrum?channel=&at=TIME: the kept spectrum nearest that time, with the analysis settings of its run. */
export interface SpectrumReply extends StoredSpectrumJson {
  channel: string;
  unit: string;
  /** Seconds between the asked time and this spectrum (wall time). */
  offsetSeconds: number;
  settings: Record<string, unknown>;
}
