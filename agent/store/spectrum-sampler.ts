// Keeps one spectrum per channel every few seconds of sample time in the store's spectra table: the averaged
// density of a snapshot reduced to a fixed log grid (dsp/log-grid.ts), float32. Bounded: SPECTRUM_POINTS × 4 bytes
// a row, one row per channel per SPECTRUM_EVERY_SECONDS (sizes in README "History store").
import { reduceToLogGrid } from '../../dsp/log-grid.ts';
import type { SpectrumSnapshot } from '../pipeline/types.ts';
import type { HistoryWriter } from './history-writer.ts';

/** Grid points per kept spectrum, first bin to Nyquist. */
export const SPECTRUM_POINTS = 256;
/** Sample time between kept spectra, seconds. */
export const SPECTRUM_EVERY_SECONDS = 5;

export class SpectrumSampler {
  private runId: number | undefined;
  private settingsKey = '';
  private nextSample = 0;

  constructor(
    private readonly writer: HistoryWriter,
    private readonly everySeconds = SPECTRUM_EVERY_SECONDS,
    private readonly points = SPECTRUM_POINTS,
  ) {}

  onSnapshot(snap: SpectrumSnapshot): void {
    const run = this.writer.runInfo;
    if (!run) return;
    if (run.id !== this.runId) {
      // A new run (stream or settings): its first snapshot of the run's settings is kept at once.
      this.runId = run.id;
      this.settingsKey = JSON.stringify(run.settings);
      this.nextSample = -1;
    }
    if (snap.sample < this.nextSample) return;
    // Snapshots of the settings before a change can still arrive after the run began: they are no part of it.
    if (JSON.stringify(snap.settings) !== this.settingsKey) return;
    const bins = snap.frequencies.length;
    if (bins < 3) return;
    const fLow = snap.binHz;
    const fHigh = (bins - 1) * snap.binHz;
    for (const ch of snap.channels) {
      const density = reduceToLogGrid(ch.psd, snap.binHz, fLow, fHigh, new Float32Array(this.points));
      this.writer.spectrum({ sample: snap.sample, channel: ch.name, unit: ch.unit, fLow, fHigh, density });
    }
    this.nextSample = snap.sample + Math.round(this.everySeconds * snap.settings.sampleRate);
  }
}
