// Turns the pipeline's output into trend values: per Welch segment, each channel's band powers (Σ density·Δf over
// the band's bins, the analyze rule); per snapshot, each channel's floor density (median of the averaged density
// over the usable range), mains total and strongest line. Values go into one accumulator per level.
import { bandBins, type BinRange } from '../../dsp/bands.ts';
import { windowMainLobeHalfWidth } from '../../dsp/windows.ts';
import { defaultBands, usableRange } from '../rules/default-bands.ts';
import type { AnalysisGrid, SegmentObserver, SpectrumSnapshot } from '../pipeline/types.ts';
import type { DetectorStatus } from '../rules/detectors.ts';
import { IntervalAccumulator } from './interval-accumulator.ts';
import { levelSamples } from './levels.ts';
import { LEVELS } from './schema.ts';
import type { HistoryWriter } from './history-writer.ts';
import { medianInRange } from './median.ts';
import type { RunContext } from './run-context.ts';

export interface SamplerOptions {
  command: string;
  source: string;
  /** Bands in Hz (default: the alarm rules' default decade bands and the whole usable band). */
  bands?: readonly { low: number; high: number }[];
  /** Wall time label of a sample (the pipeline's wallTimeAt). */
  wallMsAt: (sample: number) => number;
  detectorStatus?: () => readonly DetectorStatus[] | undefined;
  /** The run's baseline, config and channels, asked at the start of each run. */
  context?: () => RunContext | undefined;
}

interface RunGrid {
  channels: number;
  bands: BinRange[];
  binHz: number;
  floor: BinRange;
  accumulators: IntervalAccumulator[];
  settingsKey: string;
  scratch: Float64Array;
}

export class TrendSampler implements SegmentObserver {
  private grid: RunGrid | undefined;

  constructor(
    private readonly writer: HistoryWriter,
    private readonly options: SamplerOptions,
  ) {}

  onAnalysis(g: AnalysisGrid): void {
    this.finish();
    const s = g.settings;
    const bins = g.frequencies.length;
    const bandSpecs = this.options.bands?.length
      ? this.options.bands
      : defaultBands(s.sampleRate, s.segment, windowMainLobeHalfWidth(s.window));
    const usable = usableRange(s.sampleRate, s.segment, windowMainLobeHalfWidth(s.window));
    const lengths = levelSamples(s.sampleRate, g.snapshotInterval);
    const w = this.writer;
    w.beginRun({
      command: this.options.command,
      source: this.options.source,
      sampleRate: s.sampleRate,
      firstSample: g.firstSample,
      startWallMs: this.options.wallMsAt(g.firstSample),
      settings: s,
      levelSamples: lengths,
      context: this.options.context?.(),
    });
    const ids: number[] = [];
    for (const ch of g.channels)
      for (const b of bandSpecs) ids.push(w.seriesId(ch.name, 'bandRms', [b.low, b.high], ch.unit));
    for (const ch of g.channels) ids.push(w.seriesId(ch.name, 'floorDensity', null, `${ch.unit}/√Hz`));
    for (const ch of g.channels) ids.push(w.seriesId(ch.name, 'mainsTotal', null, ch.unit));
    for (const ch of g.channels) ids.push(w.seriesId(ch.name, 'strongestLine', null, ch.unit));
    const seriesIds = Int32Array.from(ids);
    this.grid = {
      channels: g.channels.length,
      bands: bandSpecs.map((b) => bandBins(bins, g.binHz, b.low, b.high)),
      binHz: g.binHz,
      floor: bandBins(bins, g.binHz, usable.low, usable.high),
      accumulators: LEVELS.map((l, i) => new IntervalAccumulator(i, lengths[l], seriesIds.length, w.rows, seriesIds)),
      settingsKey: JSON.stringify(s),
      scratch: new Float64Array(bins),
    };
  }

  onSegment(channel: number, density: Float64Array, lastSample: number): void {
    const g = this.grid;
    if (!g) return;
    const bands = g.bands;
    const nb = bands.length;
    const acc = g.accumulators;
    for (let b = 0; b < nb; b++) {
      const r = bands[b];
      let sum = 0;
      for (let k = r.first; k <= r.last; k++) sum += density[k];
      const power = sum * g.binHz;
      const rms = Math.sqrt(power);
      const s = channel * nb + b;
      for (let l = 0; l < acc.length; l++) acc[l].add(s, lastSample, power, rms);
    }
  }

  onSnapshot(snap: SpectrumSnapshot): void {
    const g = this.grid;
    if (!g || JSON.stringify(snap.settings) !== g.settingsKey) return;
    const base = g.channels * g.bands.length;
    const status = this.options.detectorStatus?.();
    for (let c = 0; c < g.channels && c < snap.channels.length; c++) {
      const d = medianInRange(snap.channels[c].psd, g.floor.first, g.floor.last, g.scratch);
      if (Number.isFinite(d)) this.addAll(base + c, snap.sample, d, Math.sqrt(d));
      const st = status?.find((x) => x.channel === snap.channels[c].name);
      if (!st) continue;
      const mains = st.mains.total;
      if (Number.isFinite(mains)) this.addAll(base + g.channels + c, snap.sample, mains * mains, mains);
      let strongest = 0;
      for (const line of st.lines) if (line.amplitude > strongest) strongest = line.amplitude;
      this.addAll(base + 2 * g.channels + c, snap.sample, strongest * strongest, strongest);
    }
  }

  private addAll(s: number, sample: number, power: number, value: number): void {
    for (const a of this.grid!.accumulators) a.add(s, sample, power, value);
  }

  /** Writes out the open intervals (end of the stream or of these settings). */
  finish(): void {
    if (!this.grid) return;
    for (const a of this.grid.accumulators) a.finishAll();
    this.writer.flush();
    this.grid = undefined;
  }
}
