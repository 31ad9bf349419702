// Per-channel streaming Welch estimators and the snapshot schedule, all in sample time.
// Two rules make the spectra a function of absolute sample indices only (so any block size, any replay speed
// and a replay of a live run give bit-identical snapshots):
//  - segments start at absolute indices that are multiples of the step (segment − floor(overlap·segment)); after
//    the start of a stream or a gap, samples before the next such index are not analysed;
//  - snapshot instants are the samples s with (s + 1) mod interval = 0, interval = round(rate / snapshotRate);
//    a snapshot is taken at an instant only when a new segment completed since the previous one.
// Both grids count from `origin` (0, the stream's own count). A replay loop moves the origin to where the file
// starts again, so every loop is analysed on the same grid of file indices as the first.
import { WelchEstimator, binFrequencies, welchStep } from '../../dsp/welch.ts';
import { CrossSpectraAverager } from '../../dsp/live-cross-spectra.ts';
import { makeWindow, type WindowInfo } from '../../dsp/windows.ts';
import type { AnalysisSettings, AveragingSpec, DetrendMode } from '../../protocol/settings.ts';
import type { StreamInfo } from '../../protocol/stream.ts';
import type { SnapshotChannel, SnapshotCoherence, SpectrumSnapshot } from './types.ts';

export interface AnalysisChoice {
  segment: number;
  window: string;
  overlap: number;
  detrend: DetrendMode;
}

export const DEFAULT_ANALYSIS: AnalysisChoice = { segment: 4096, window: 'hann', overlap: 0.5, detrend: 'mean' };
export const DEFAULT_SNAPSHOT_RATE = 10;

/** Smallest origin + k·step (k integer) that is ≥ sample. */
export function alignUp(sample: number, step: number, origin = 0): number {
  return origin + Math.ceil((sample - origin) / step) * step;
}

/** Most memory the live analysis may hold (averaging history and segment buffers, all channels): a setting that
 * would need more is refused before anything is allocated, so no request can exhaust the agent's memory. */
export const ANALYSIS_MEMORY_MAX_BYTES = 256 * 1024 * 1024;

/** Bytes the analysis of `channels` channels holds for these settings: a rolling or median average keeps `count`
 * spectra of segment/2 + 1 float64 bins per channel; each estimator keeps a few segment-long float64 buffers. With
 * cross-spectra (`pairs` > 0) each channel's auto-spectrum and each pair's complex cross-spectrum keep their rows too. */
export function analysisMemoryBytes(segment: number, averaging: AveragingSpec, channels: number, pairs = 0): number {
  const rows = averaging.mode === 'rolling' || averaging.mode === 'median' ? averaging.count : 1;
  const bins = segment / 2 + 1;
  const cross = pairs > 0 ? (channels * (rows + 3) + pairs * 2 * (rows + 1)) * bins * 8 : 0;
  return channels * ((rows + 2) * bins * 8 + 8 * segment * 8) + cross;
}

export class Analyser {
  readonly settings: AnalysisSettings;
  readonly step: number;
  readonly interval: number;
  private readonly estimators: WelchEstimator[];
  /** First absolute index that will be pushed after the latest start or gap. */
  private alignedFrom: number;
  /** Where the segment and snapshot grids count from. */
  private origin = 0;
  private lastSnapshotSegments = 0;
  /** Cross-spectra of channel pairs, fed each segment's complex spectra (absent without pairs). */
  private readonly cross: CrossSpectraAverager | undefined;
  /** The newest segment's complex spectrum per channel, and its last sample (−1: none yet). */
  private readonly spectra: Float64Array[] = [];
  private readonly spectrumSample: Float64Array = new Float64Array(0);
  /** What its snapshots share, and their assembly. */
  private readonly frame: SnapshotFrame;

  constructor(
    private readonly info: StreamInfo,
    choice: AnalysisChoice,
    readonly averaging: AveragingSpec,
    snapshotRate: number,
    startSample: number,
    /** Channel index pairs whose cross-spectra and coherence the snapshots carry. */
    readonly pairs: readonly (readonly [number, number])[] = [],
  ) {
    if (!(snapshotRate > 0) || !Number.isFinite(snapshotRate)) {
      throw new RangeError(`snapshot rate must be a positive number of snapshots per second, got ${snapshotRate}`);
    }
    const bytes = analysisMemoryBytes(choice.segment, averaging, info.channels.length, pairs.length);
    if (bytes > ANALYSIS_MEMORY_MAX_BYTES) {
      const what =
        averaging.mode === 'rolling' || averaging.mode === 'median'
          ? `a ${averaging.mode} average of ${averaging.count} spectra`
          : 'the analysis';
      throw new RangeError(
        `segment ${choice.segment} with ${what} on ${info.channels.length} channel(s) would hold ${Math.round(bytes / 2 ** 20)} MiB; ` +
          `the live analysis may hold at most ${ANALYSIS_MEMORY_MAX_BYTES / 2 ** 20} MiB (so no setting can exhaust the agent's memory): lower the count or the segment`,
      );
    }
    this.settings = {
      sampleRate: info.sampleRate,
      segment: choice.segment,
      window: choice.window,
      overlap: choice.overlap,
      detrend: choice.detrend,
    };
    this.step = welchStep(choice.segment, choice.overlap);
    this.interval = Math.max(1, Math.round(info.sampleRate / snapshotRate));
    this.alignedFrom = alignUp(startSample, this.step);
    this.estimators = info.channels.map(
      () =>
        new WelchEstimator({
          sampleRate: info.sampleRate,
          segment: choice.segment,
          window: choice.window,
          overlap: choice.overlap,
          detrend: choice.detrend,
          scaling: 'density',
          averaging,
          firstSample: this.alignedFrom,
        }),
    );
    // The estimator canonicalises the window name (e.g. "Hann" → "hann").
    this.settings.window = this.estimators[0].window.name;
    this.frame = new SnapshotFrame(info, choice, averaging, pairs, this.estimators[0].window);
    if (pairs.length > 0) {
      this.cross = new CrossSpectraAverager({
        sampleRate: info.sampleRate,
        segment: choice.segment,
        window: choice.window,
        overlap: choice.overlap,
        averaging,
        channels: info.channels.length,
        pairs,
      });
      const bins = this.estimators[0].bins;
      this.spectrumSample = new Float64Array(info.channels.length).fill(-1);
      this.estimators.forEach((e, c) => {
        const own = new Float64Array(2 * bins);
        this.spectra.push(own);
        e.onSpectrum((x, last) => {
          own.set(x);
          this.spectrumSample[c] = last;
        });
      });
    }
  }

  /** Hands every completed segment of channel c to fn(c, density, lastSample) (undefined: stop). */
  observeSegments(fn: ((channel: number, density: Float64Array, lastSample: number) => void) | undefined): void {
    this.estimators.forEach((e, c) => e.onSegment(fn ? (density, last) => fn(c, density, last) : undefined));
  }

  get binHz(): number {
    return this.estimators[0].binHz;
  }

  get frequencies(): Float64Array {
    return this.estimators[0].frequencies;
  }

  /** Drops partial segments; analysis resumes at the first step multiple at or after `nextSample`. */
  restartAt(nextSample: number): void {
    this.alignedFrom = alignUp(nextSample, this.step, this.origin);
    for (const e of this.estimators) e.reset(this.alignedFrom);
  }

  /** As restartAt, forgetting the averages too, with the grids counted from `origin`: a replay's loop seam. */
  clearAt(nextSample: number, origin: number): void {
    for (const e of this.estimators) e.clear();
    this.cross?.clear();
    this.lastSnapshotSegments = 0;
    this.origin = origin;
    this.restartAt(nextSample);
  }

  /**
   * Pushes data[c][0..frames) (absolute indices firstSample…) and calls onInstant(s) at every snapshot instant s
   * inside the block at which a new segment has completed since the previous snapshot.
   */
  process(
    data: readonly Float64Array[],
    firstSample: number,
    frames: number,
    onInstant: (sample: number) => void,
  ): void {
    const end = firstSample + frames;
    const interval = this.interval;
    const origin = this.origin;
    const estimators = this.estimators;
    const n = estimators.length;
    let pos = Math.max(firstSample, this.alignedFrom);
    while (pos < end) {
      const boundary = origin + Math.ceil((pos - origin + 1) / interval) * interval - 1;
      const chunkEnd = boundary + 1 < end ? boundary + 1 : end;
      const from = pos - firstSample;
      const to = chunkEnd - firstSample;
      if (this.cross) this.pushPaired(data, firstSample, pos, chunkEnd);
      else for (let c = 0; c < n; c++) estimators[c].push(data[c], from, to);
      if (chunkEnd === boundary + 1) {
        const total = estimators[0].segmentsTotal;
        if (total !== this.lastSnapshotSegments) {
          this.lastSnapshotSegments = total;
          onInstant(boundary);
        }
      }
      pos = chunkEnd;
    }
  }

  /**
   * Pushes absolute [pos, end) to every channel in pieces that end where a segment completes, so each piece completes
   * at most one segment per channel and the cross-spectra get every channel's spectrum of the same segment. The
   * estimates do not depend on how samples are split into pushes (WelchEstimator), so the densities stay bit-identical.
   */
  private pushPaired(data: readonly Float64Array[], firstSample: number, pos: number, end: number): void {
    const estimators = this.estimators;
    const n = estimators.length;
    const segment = this.settings.segment;
    const step = this.step;
    const firstEnd = this.alignedFrom + segment; // end (exclusive) of the first segment after the latest restart
    while (pos < end) {
      const k = Math.max(0, Math.ceil((pos + 1 - firstEnd) / step));
      const completes = firstEnd + k * step;
      const to = completes < end ? completes : end;
      for (let c = 0; c < n; c++) estimators[c].push(data[c], pos - firstSample, to - firstSample);
      if (to === completes) {
        const last = completes - 1;
        let all = true;
        for (let c = 0; c < n; c++) if (this.spectrumSample[c] !== last) all = false;
        if (all) this.cross!.add(this.spectra);
      }
      pos = to;
    }
  }

  /** A snapshot of every channel's current estimate (fresh arrays: subscribers may keep it). */
  snapshot(sample: number, wallTime: string, sequence: number): SpectrumSnapshot {
    const channels: SnapshotChannel[] = this.estimators.map((e, c) => ({
      name: this.info.channels[c].name,
      unit: this.info.channels[c].unit,
      psd: e.psd(new Float64Array(e.bins)),
      segmentsUsed: e.segmentsUsed,
      segmentsTotal: e.segmentsTotal,
      equivalentAverages: e.equivalentAverages(),
      lastSegmentSample: e.lastSegmentSample,
    }));
    return this.frame.snapshot(sample, wallTime, sequence, channels, this.cross ? this.coherenceNow() : undefined);
  }

  /**
   * The numbers of the snapshot at `sample` into out[at…] in SnapshotFrame.read's order, for a snapshot taken on
   * another thread: the sample; per channel segmentsUsed, segmentsTotal, equivalentAverages, lastSegmentSample; the
   * pairs' segmentsUsed and equivalentAverages; the densities; per pair csd re, csd im and coherence.
   */
  writeSnapshot(sample: number, out: Float64Array, at: number): void {
    const bins = this.estimators[0].bins;
    let i = at;
    out[i++] = sample;
    for (const e of this.estimators) {
      out[i++] = e.segmentsUsed;
      out[i++] = e.segmentsTotal;
      out[i++] = e.equivalentAverages();
      out[i++] = e.lastSegmentSample;
    }
    out[i++] = this.cross ? this.cross.used : 0;
    out[i++] = this.cross ? this.cross.equivalentAverages() : 0;
    for (const e of this.estimators) {
      e.psd(out.subarray(i, i + bins));
      i += bins;
    }
    for (let p = 0; p < this.pairs.length; p++) {
      this.cross!.pairInto(
        p,
        out.subarray(i, i + bins),
        out.subarray(i + bins, i + 2 * bins),
        out.subarray(i + 2 * bins, i + 3 * bins),
      );
      i += 3 * bins;
    }
  }

  private coherenceNow(): SnapshotCoherence[] {
    const cross = this.cross!;
    const bins = cross.bins;
    const used = cross.used;
    const k = cross.equivalentAverages();
    return this.pairs.map(([a, b], i) => {
      const re = new Float64Array(bins);
      const im = new Float64Array(bins);
      const coherence = new Float64Array(bins);
      cross.pairInto(i, re, im, coherence);
      return {
        a: this.info.channels[a].name,
        b: this.info.channels[b].name,
        coherence,
        csdRe: re,
        csdIm: im,
        segmentsUsed: used,
        equivalentAverages: k,
      };
    });
  }
}

/**
 * What every snapshot of one analysis shares (settings, frequencies, window figures, names), and the assembly of a
 * snapshot from its per-channel parts or from the numbers Analyser.writeSnapshot wrote. Computed from the stream
 * and the choice alone, with the estimator's own arithmetic, so a thread that never analysed builds the same
 * snapshots as the one that did.
 */
export class SnapshotFrame {
  readonly settings: AnalysisSettings;
  readonly frequencies: Float64Array;
  readonly binHz: number;
  readonly nenbw: number;
  readonly enbwHz: number;
  readonly bins: number;

  constructor(
    private readonly info: StreamInfo,
    choice: AnalysisChoice,
    readonly averaging: AveragingSpec,
    readonly pairs: readonly (readonly [number, number])[],
    // The local analyser passes its estimator's window rather than build it twice.
    window: WindowInfo = makeWindow(choice.window, choice.segment),
  ) {
    this.settings = {
      sampleRate: info.sampleRate,
      segment: choice.segment,
      window: window.name,
      overlap: choice.overlap,
      detrend: choice.detrend,
    };
    this.bins = choice.segment / 2 + 1;
    this.binHz = info.sampleRate / choice.segment;
    this.frequencies = binFrequencies(info.sampleRate, choice.segment);
    this.nenbw = window.nenbw;
    this.enbwHz = window.enbwHz(info.sampleRate);
  }

  snapshot(
    sample: number,
    wallTime: string,
    sequence: number,
    channels: SnapshotChannel[],
    coherence: SnapshotCoherence[] | undefined,
  ): SpectrumSnapshot {
    return {
      sample,
      t: sample / this.settings.sampleRate,
      wallTime,
      sequence,
      settings: { ...this.settings },
      averaging: { ...this.averaging },
      frequencies: this.frequencies,
      binHz: this.binHz,
      nenbw: this.nenbw,
      enbwHz: this.enbwHz,
      channels,
      ...(coherence ? { coherence } : {}),
    };
  }

  /** The snapshot Analyser.writeSnapshot wrote at numbers[at…] (fresh arrays). */
  read(numbers: Float64Array, at: number, wallTime: string, sequence: number): SpectrumSnapshot {
    const bins = this.bins;
    const names = this.info.channels;
    let i = at;
    const sample = numbers[i++];
    const channels: SnapshotChannel[] = names.map((c) => {
      const ch = {
        name: c.name,
        unit: c.unit,
        psd: new Float64Array(0),
        segmentsUsed: numbers[i],
        segmentsTotal: numbers[i + 1],
        equivalentAverages: numbers[i + 2],
        lastSegmentSample: numbers[i + 3],
      };
      i += 4;
      return ch;
    });
    const used = numbers[i++];
    const k = numbers[i++];
    for (const ch of channels) {
      ch.psd = numbers.slice(i, i + bins);
      i += bins;
    }
    const coherence = this.pairs.length
      ? this.pairs.map(([a, b]) => {
          const csdRe = numbers.slice(i, i + bins);
          const csdIm = numbers.slice(i + bins, i + 2 * bins);
          const coh = numbers.slice(i + 2 * bins, i + 3 * bins);
          i += 3 * bins;
          return {
            a: names[a].name,
            b: names[b].name,
            coherence: coh,
            csdRe,
            csdIm,
            segmentsUsed: used,
            equivalentAverages: k,
          };
        })
      : undefined;
    return this.snapshot(sample, wallTime, sequence, channels, coherence);
  }
}
