// The live low-frequency view of every channel: a LiveLogFrequency and a 0.1–10 Hz PeakToPeakMeter fed from the
// pipeline's calibrated blocks, a frame (ASD, confidence band, averages) at fixed sample instants and a 1/f corner
// fit every few frames. Instants are the samples s with (s − seamOffset + 1) mod stride = 0, the pipeline's own
// snapshot rule, so any block size or replay speed gives the same updates, and each replay loop the first one's.
import type { GapNotice, StreamInfo } from '../../protocol/stream.ts';
import { LiveLogFrequency } from '../../dsp/logfreq/live-log-frequency.ts';
import { LogFrequencyFrameBuilder, type LogFrequencyFrame } from '../../dsp/logfreq/live-frame.ts';
import { PeakToPeakMeter, peakToPeakFigures } from '../../dsp/flicker/peak-to-peak.ts';
import {
  fitCorner,
  logChiSquareBias,
  logChiSquareVariance,
  logCornerModel,
  type CornerFit,
} from '../../dsp/flicker/corner-fit.ts';
import type {
  CornerFitReading,
  LowFrequencyContext,
  LowFrequencyStatus,
  LowFrequencyUpdate,
  PeakToPeakFigures,
} from '../../protocol/low-frequency-messages.ts';
import type { LowFrequencyView } from './view.ts';
import { FrameListeners } from './frame-listeners.ts';

export interface LiveLowFrequencyOptions {
  /** Updates per second of sample time (default 2). */
  updatesPerSecond?: number;
  /** One corner fit every this many updates (default 4). */
  fitEvery?: number;
  /** Sample time each point averages over, seconds (default 60). */
  spanSeconds?: number;
  points?: number;
  averages?: number;
  level?: number;
}

/** What a pipeline offers that this needs (structural: Pipeline fits). */
export interface BlockFeed {
  on(name: 'info', fn: (i: StreamInfo) => void): unknown;
  on(name: 'block', fn: (b: { firstSample: number; frames: number; data: Float64Array[] }) => void): unknown;
  on(name: 'gap', fn: (g: GapNotice) => void): unknown;
}

interface ChannelState {
  name: string;
  unit: string;
  live: LiveLogFrequency;
  frames: LogFrequencyFrameBuilder;
  meter: PeakToPeakMeter | null;
  fit: CornerFitReading | null;
  peakToPeak: PeakToPeakFigures | null;
}

const nullable = (a: Float64Array): (number | null)[] => Array.from(a, (v) => (Number.isFinite(v) ? v : null));

function reading(f: CornerFit, excluded: number, frame: LogFrequencyFrame): CornerFitReading {
  return {
    sample: frame.sample,
    t: frame.t,
    whiteAsd: f.whiteAsd,
    whiteAsdSigma: f.whiteAsdSigma,
    corner: f.corner,
    cornerSigma: f.cornerSigma,
    exponent: f.exponent,
    exponentSigma: f.exponentSigma,
    exponentFree: f.exponentFree,
    reducedChiSquare: f.reducedChiSquare,
    points: f.points,
    excludedPoints: excluded,
  };
}

/** Standardised residuals above this leave the fit as lines (mains, spurs raise a density; noise rarely does). */
export const LINE_CLIP_SIGMA = 4;

function fitOnce(f: number[], psd: number[], dof: number[], fitMaxHz: number, from?: CornerFit): CornerFit | null {
  const start = from ? { a: Math.log(from.whitePsd), b: Math.log(from.corner), alpha: from.exponent } : undefined;
  for (const exponent of ['free', 1] as const) {
    try {
      const r = fitCorner({ frequency: f, psd, dof }, { maxFrequency: fitMaxHz, exponent, start });
      if (r.converged && Number.isFinite(r.cornerSigma) && Number.isFinite(r.whiteAsdSigma)) return r;
    } catch {
      // too few points yet: no fit
    }
  }
  return null;
}

/**
 * Fits the points that have an estimate, at or below fitMaxHz: free α first, α = 1 when that fails. Points whose
 * log density sits more than LINE_CLIP_SIGMA above the fitted model (in units of the log-chi-square spread,
 * ψ'(ν/2)) are left out and the fit repeated, at most 4 times: one-sided sigma clipping (common practice), so
 * narrow lines do not pull the floor up. `excluded` counts the points left out.
 */
export function fitFrame(
  frame: LogFrequencyFrame,
  equivalentAverages: Float64Array,
  fitMaxHz: number,
): { fit: CornerFit; excluded: number } | null {
  let f: number[] = [];
  let psd: number[] = [];
  let dof: number[] = [];
  for (let p = 0; p < frame.frequency.length; p++) {
    const a = frame.asd[p];
    if (!(a > 0) || !(equivalentAverages[p] >= 1) || frame.frequency[p] > fitMaxHz) continue;
    f.push(frame.frequency[p]);
    psd.push(a * a);
    dof.push(2 * equivalentAverages[p]);
  }
  const total = f.length;
  let previous: CornerFit | undefined;
  for (let round = 0; ; round++) {
    // After the first round the points differ only by the lines left out: start from the fit before.
    const fit = fitOnce(f, psd, dof, fitMaxHz, previous);
    previous = fit ?? undefined;
    if (!fit || round === 4) return fit ? { fit, excluded: total - f.length } : null;
    const a = Math.log(fit.whitePsd);
    const b = Math.log(fit.corner);
    const keep = f.map(
      (fi, i) =>
        (Math.log(psd[i]) - logChiSquareBias(dof[i]) - logCornerModel(Math.log(fi), a, b, fit.exponent)) /
          Math.sqrt(logChiSquareVariance(dof[i])) <=
        LINE_CLIP_SIGMA,
    );
    if (keep.every(Boolean)) return { fit, excluded: total - f.length };
    f = f.filter((_, i) => keep[i]);
    psd = psd.filter((_, i) => keep[i]);
    dof = dof.filter((_, i) => keep[i]);
  }
}

export class LiveLowFrequency implements LowFrequencyView {
  readonly updatesPerSecond: number;
  readonly fitEvery: number;
  readonly spanSeconds: number;
  private readonly o: LiveLowFrequencyOptions;
  private channels: ChannelState[] = [];
  private readonly out = new FrameListeners();
  private stride = 0;
  private sampleRate = 0;
  /** Next sample expected, and the sample-index offset of the grid (absolute − file index after a seam). */
  private expected = 0;
  private gridOffset = 0;
  private eq = new Float64Array(0);

  constructor(options: LiveLowFrequencyOptions = {}) {
    this.updatesPerSecond = options.updatesPerSecond ?? 2;
    this.fitEvery = options.fitEvery ?? 4;
    this.spanSeconds = options.spanSeconds ?? 60;
    if (!(this.updatesPerSecond > 0))
      throw new RangeError(`low-frequency view: updatesPerSecond must be positive, got ${this.updatesPerSecond}`);
    if (!(Number.isInteger(this.fitEvery) && this.fitEvery >= 1))
      throw new RangeError(`low-frequency view: fitEvery must be an integer ≥ 1, got ${this.fitEvery}`);
    this.o = options;
  }

  attach(feed: BlockFeed): this {
    feed.on('info', (i) => this.start(i.sampleRate, i.channels, i.firstSample));
    feed.on('block', (b) => this.block(b.firstSample, b.frames, b.data));
    feed.on('gap', (g) => this.gap(g));
    return this;
  }

  onContext(fn: (c: LowFrequencyContext) => void): () => void {
    return this.out.onContext(fn);
  }

  onUpdate(fn: (u: LowFrequencyUpdate) => void): () => void {
    return this.out.onUpdate(fn);
  }

  /** Nothing runs elsewhere: every frame was delivered inside block(). */
  close(): Promise<void> {
    return Promise.resolve();
  }

  context(): LowFrequencyContext | null {
    return this.out.ctx;
  }

  latest(): LowFrequencyUpdate | null {
    return this.out.last;
  }

  status(): LowFrequencyStatus[] {
    return this.channels.map((c) => ({
      channel: c.name,
      unit: c.unit,
      sample: this.out.last?.sample ?? -1,
      t: this.out.last?.t ?? 0,
      fit: c.fit,
      peakToPeak: c.peakToPeak,
    }));
  }

  /** A new stream: allocates the estimators (a rate too low for 0.1–10 Hz leaves the meter off). */
  start(sampleRate: number, channels: readonly { name: string; unit: string }[], firstSample = 0): void {
    const o = this.o;
    this.sampleRate = sampleRate;
    this.stride = Math.max(1, Math.round(sampleRate / this.updatesPerSecond));
    this.expected = firstSample;
    this.gridOffset = 0;
    this.channels = channels.map((c) => {
      const live = new LiveLogFrequency({
        sampleRate,
        spanSeconds: this.spanSeconds,
        points: o.points,
        averages: o.averages,
        firstSample,
      });
      return {
        name: c.name,
        unit: c.unit,
        live,
        frames: new LogFrequencyFrameBuilder(live, o.level ?? 0.95),
        meter: this.makeMeter(firstSample),
        fit: null,
        peakToPeak: null,
      };
    });
    const first = this.channels[0]?.live;
    this.eq = new Float64Array(first?.count ?? 0);
    const meter = this.channels[0]?.meter;
    this.out.context({
      id: (this.out.ctx?.id ?? 0) + 1,
      sampleRate,
      channels: channels.map((c) => ({ name: c.name, unit: c.unit })),
      frequency: first ? Array.from(first.frequency) : [],
      rbwHz: first ? Array.from(first.rbwHz) : [],
      level: o.level ?? 0.95,
      spanSeconds: this.spanSeconds,
      updatesPerSecond: this.updatesPerSecond,
      fitEvery: this.fitEvery,
      fitMaxHz: sampleRate / 10,
      peakToPeak: meter
        ? {
            lowHz: 0.1,
            highHz: 10,
            windowSeconds: meter.windowSamples / sampleRate,
            settleSeconds: meter.settleSeconds,
          }
        : null,
    });
  }

  private makeMeter(firstSample: number): PeakToPeakMeter | null {
    if (!(this.sampleRate > 20)) return null; // the 10 Hz low-pass needs fs > 20 Hz
    return new PeakToPeakMeter({ sampleRate: this.sampleRate, firstSample });
  }

  /** A gap drops open segments (averages stay); a seam (lost = 0) starts over, the grid counted from the file index. */
  gap(g: GapNotice): void {
    const next = g.sample + g.lost;
    this.expected = next;
    if (g.lost === 0) this.gridOffset = next - (g.restartsAt ?? next);
    for (const c of this.channels) {
      if (g.lost === 0) c.live.clear(next);
      else c.live.reset(next);
      c.meter = this.makeMeter(next); // the band-pass must settle again after a hole or a seam
      if (g.lost === 0) {
        c.fit = null;
        c.peakToPeak = null;
      }
    }
  }

  block(firstSample: number, frames: number, data: readonly Float64Array[]): void {
    if (this.channels.length === 0) return;
    let from = 0;
    if (firstSample > this.expected)
      this.gap({ sample: this.expected, lost: firstSample - this.expected, reason: 'block jump' });
    else if (firstSample < this.expected) from = this.expected - firstSample; // overlap already seen
    const stride = this.stride;
    while (from < frames) {
      const s0 = firstSample + from;
      // Samples up to and including the next instant s with (s − offset + 1) mod stride = 0.
      const phase = (((s0 - this.gridOffset + 1) % stride) + stride) % stride;
      const toInstant = phase === 0 ? 0 : stride - phase;
      const end = Math.min(frames, from + toInstant + 1);
      for (let c = 0; c < this.channels.length; c++) {
        const ch = this.channels[c];
        ch.live.push(data[c], from, end);
        if (ch.meter && ch.meter.push(data[c], from, end) > 0) {
          const r = ch.meter.latest;
          ch.peakToPeak = peakToPeakFigures(r);
        }
      }
      const lastPushed = firstSample + end - 1;
      this.expected = lastPushed + 1;
      if (end - from === toInstant + 1) this.publish(lastPushed);
      from = end;
    }
  }

  private publish(sample: number): void {
    const ctx = this.out.ctx!;
    const index = Math.round((sample - this.gridOffset + 1) / this.stride);
    const fitNow = index % this.fitEvery === 0;
    const update: LowFrequencyUpdate = {
      contextId: ctx.id,
      sample,
      t: sample / this.sampleRate,
      channels: this.channels.map((c) => {
        const frame = c.frames.update();
        if (fitNow) {
          c.live.equivalentAverages(this.eq);
          const fit = fitFrame(frame, this.eq, ctx.fitMaxHz);
          c.fit = fit ? reading(fit.fit, fit.excluded, frame) : null;
        }
        return {
          name: c.name,
          asd: nullable(frame.asd),
          lower: nullable(frame.asdLower),
          upper: nullable(frame.asdUpper),
          averages: Array.from(frame.averages),
          fit: c.fit,
          peakToPeak: c.peakToPeak,
        };
      }),
    };
    this.out.update(update);
  }
}
