// Baseline capture over a span of sample time, fed with calibrated blocks (the pipeline's 'block' event or a WAV
// reader). It runs its own mean-averaging Welch estimators with the live settings rather than averaging the
// pipeline's snapshots: snapshots of a rolling average share segments, so their mean would count each segment
// many times and overstate the equivalent number of averages the alarm statistics rely on.
// One estimator covers the whole span; two more cover its halves for the settling check.
import { WelchEstimator } from '../../dsp/welch.ts';
import { bandBins, bandRmsInBins } from '../../dsp/bands.ts';
import type { BandSpec } from '../../dsp/detection/band-compare.ts';
import { binPowerCorrelation } from '../../dsp/detection/threshold.ts';
import { settingsHash, type AnalysisSettings } from '../../protocol/settings.ts';
import { BASELINE_SCHEMA, type BaselineFile } from './format.ts';
import { combineSettling, settlingCheck } from './settling.ts';

export interface BaselineCaptureOptions {
  settings: AnalysisSettings;
  channels: { name: string; unit: string; referredTo?: 'input' }[];
  /** First sample of the span (blocks before it are ignored). */
  firstSample: number;
  /** Span length in samples. */
  samples: number;
  bands: BandSpec[];
  source: string;
  notes?: string;
}

export interface CalibratedBlock {
  firstSample: number;
  frames: number;
  data: Float64Array[];
}

/** A stream channel as the capture names it: input-referred when its calibration divides by the gain. */
export function baselineChannelOf(c: {
  name: string;
  unit: string;
  calibration?: { inputReferred: boolean; gain?: number };
}): { name: string; unit: string; referredTo?: 'input' } {
  return c.calibration?.inputReferred && c.calibration.gain !== undefined
    ? { name: c.name, unit: c.unit, referredTo: 'input' }
    : { name: c.name, unit: c.unit };
}

export class BaselineCapture {
  readonly firstSample: number;
  readonly endSample: number;
  private readonly mid: number;
  private readonly whole: WelchEstimator[];
  private readonly halves: [WelchEstimator, WelchEstimator][];
  private lastSample = -1;

  constructor(private readonly o: BaselineCaptureOptions) {
    const s = o.settings;
    const minSamples = 4 * s.segment;
    if (!Number.isSafeInteger(o.samples) || o.samples < minSamples) {
      throw new RangeError(
        `baseline capture: the span must hold at least 4 segments (${minSamples} samples, ${(minSamples / s.sampleRate).toFixed(2)} s) so each half averages two; got ${o.samples}`,
      );
    }
    if (o.channels.length === 0) throw new RangeError('baseline capture: no channels to capture');
    this.firstSample = o.firstSample;
    this.endSample = o.firstSample + o.samples;
    this.mid = o.firstSample + Math.floor(o.samples / 2);
    const make = (first: number): WelchEstimator =>
      new WelchEstimator({ ...s, averaging: { mode: 'mean' }, firstSample: first });
    this.whole = o.channels.map(() => make(o.firstSample));
    this.halves = o.channels.map(() => [make(o.firstSample), make(this.mid)]);
  }

  get done(): boolean {
    return this.lastSample >= this.endSample - 1;
  }

  /** Feeds a block (any part outside the span is skipped). Returns true once the span is complete. */
  push(block: CalibratedBlock): boolean {
    const from = Math.max(block.firstSample, this.firstSample);
    const to = Math.min(block.firstSample + block.frames, this.endSample);
    if (to <= from) return this.done;
    for (let c = 0; c < this.whole.length; c++) {
      const x = block.data[c];
      const off = block.firstSample;
      this.whole[c].push(x, from - off, to - off);
      const splitAt = Math.min(Math.max(this.mid, from), to);
      if (splitAt > from) this.halves[c][0].push(x, from - off, splitAt - off);
      if (to > splitAt) this.halves[c][1].push(x, splitAt - off, to - off);
    }
    this.lastSample = to - 1;
    return this.done;
  }

  /** Lost samples: segments never straddle a gap (the partial segment is dropped, averages stay). */
  gap(nextSample: number): void {
    for (let c = 0; c < this.whole.length; c++) {
      this.whole[c].reset(nextSample);
      this.halves[c][0].reset(nextSample);
      this.halves[c][1].reset(Math.max(nextSample, this.mid));
    }
  }

  /** The baseline; throws if too little was captured for each half to hold a segment. */
  result(wallTime: string): BaselineFile {
    const s = this.o.settings;
    const binHz = s.sampleRate / s.segment;
    const corr = binPowerCorrelation(this.whole[0].window.values);
    const settlingParts = [];
    const channels = [];
    for (let c = 0; c < this.whole.length; c++) {
      const est = this.whole[c];
      const [h1, h2] = this.halves[c];
      if (h1.segmentsUsed === 0 || h2.segmentsUsed === 0) {
        throw new RangeError(
          `baseline capture: channel ${this.o.channels[c].name} has no complete segment in one half of the span; capture a longer span`,
        );
      }
      const psd = est.psd();
      let floor = 0;
      for (let k = 1; k < psd.length; k++) floor += psd[k];
      if (!(floor > 0)) {
        // A zero floor cannot be compared against: every rise over it would be infinite.
        throw new RangeError(
          `baseline capture: channel ${this.o.channels[c].name} is silent (its density is zero above DC: a constant or disconnected input); ` +
            'capture a span where every channel carries its noise',
        );
      }
      settlingParts.push(
        settlingCheck(
          this.o.channels[c].name,
          { psd: h1.psd(), equivalentAverages: h1.equivalentAverages() },
          { psd: h2.psd(), equivalentAverages: h2.equivalentAverages() },
          binHz,
          this.o.bands,
          corr,
        ),
      );
      channels.push({
        name: this.o.channels[c].name,
        unit: this.o.channels[c].unit,
        ...(this.o.channels[c].referredTo ? { referredTo: this.o.channels[c].referredTo } : {}),
        segments: est.segmentsUsed,
        equivalentAverages: est.equivalentAverages(),
        psd: Array.from(psd),
        bands: this.o.bands.map((b) => {
          const r = bandBins(psd.length, binHz, b.low, b.high);
          return { low: b.low, high: b.high, rms: bandRmsInBins(psd, binHz, r.first, r.last) };
        }),
      });
    }
    const lastSample = Math.max(this.firstSample, this.lastSample);
    return {
      schema: BASELINE_SCHEMA,
      settings: { ...s },
      settingsHash: settingsHash(s),
      binHz,
      span: { firstSample: this.firstSample, lastSample, seconds: (lastSample - this.firstSample + 1) / s.sampleRate },
      source: this.o.source,
      createdWallTime: wallTime,
      notes: this.o.notes ?? '',
      channels,
      settling: combineSettling(settlingParts),
    };
  }
}
