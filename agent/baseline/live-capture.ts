// Live baseline capture from a running pipeline (what the dashboard calls): takes the pipeline's calibrated blocks
// for `seconds` of sample time from the next block on, with the analysis settings running now, and resolves with the
// baseline. A gap drops the partial segment (the capture goes on); a settings change or the end of the stream
// before the span is complete rejects.
import type { Pipeline } from '../pipeline/pipeline.ts';
import { windowMainLobeHalfWidth } from '../../dsp/windows.ts';
import { settingsHash } from '../../protocol/settings.ts';
import type { BandSpec } from '../../dsp/detection/band-compare.ts';
import { defaultBands } from '../rules/default-bands.ts';
import { BaselineCapture, baselineChannelOf } from './capture.ts';
import type { BaselineFile } from './format.ts';
import type { ClipNotice } from '../pipeline/types.ts';

/** Why a span with an overload makes no baseline: its floor would hold the overload and hide the faults after it. */
function overloadMessage(clips: readonly ClipNotice[], rate: number): string {
  const count = clips.reduce((a, c) => a + c.count, 0);
  const channels = [...new Set(clips.map((c) => c.channel))].join(', ');
  const first = Math.min(...clips.map((c) => c.firstSample));
  return (
    `baseline capture: ${count} clipped sample${count === 1 ? '' : 's'} on ${channels} in the span (from sample ${first}, ` +
    `t = ${(first / rate).toFixed(2)} s): a baseline holding an overload would hide faults; capture again over a clean span`
  );
}

export interface LiveCaptureOptions {
  seconds: number;
  bands?: BandSpec[];
  notes?: string;
}

export interface LiveCapture {
  /** Resolves with the baseline when the span is complete. */
  result: Promise<BaselineFile>;
  /** Fraction of the span captured so far, 0..1. */
  progress(): number;
  cancel(): void;
}

export function captureLive(pipeline: Pipeline, o: LiveCaptureOptions): LiveCapture {
  const settings = pipeline.analysisSettings;
  const stream = pipeline.stream;
  if (!settings || !stream)
    throw new RangeError('baseline capture: the stream has not started yet; wait for data from the board');
  if (!(o.seconds > 0)) throw new RangeError(`baseline capture: seconds must be > 0, got ${o.seconds}`);
  const hash = settingsHash(settings);
  const samples = Math.round(o.seconds * settings.sampleRate);
  if (samples < 4 * settings.segment) {
    throw new RangeError(
      `baseline capture: ${o.seconds} s is shorter than 4 segments (${((4 * settings.segment) / settings.sampleRate).toFixed(2)} s); capture longer`,
    );
  }
  const bands = o.bands?.length
    ? o.bands
    : defaultBands(settings.sampleRate, settings.segment, windowMainLobeHalfWidth(settings.window));
  let capture: BaselineCapture | undefined;
  let taken = 0;
  const clipped: ClipNotice[] = [];
  const offs: (() => void)[] = [];
  const stop = (): void => {
    for (const off of offs.splice(0)) off();
  };
  let cancel = (): void => {};
  const result = new Promise<BaselineFile>((resolve, reject) => {
    cancel = () => {
      stop();
      reject(new Error('baseline capture: cancelled'));
    };
    offs.push(
      pipeline.on('block', (b) => {
        const now = pipeline.analysisSettings;
        if (!now || settingsHash(now) !== hash) {
          stop();
          reject(new Error('baseline capture: the analysis settings changed during the capture; start it again'));
          return;
        }
        capture ??= new BaselineCapture({
          settings,
          channels: stream.channels.map(baselineChannelOf),
          firstSample: b.firstSample,
          samples,
          bands,
          source: `live ${stream.source.kind} ${stream.source.label}`,
          notes: o.notes,
        });
        taken = Math.min(samples, b.firstSample + b.frames - capture.firstSample);
        if (capture.push(b)) {
          const done = capture;
          // The pipeline reports a block's clipped samples right after the block: judge them once it has.
          queueMicrotask(() => {
            stop();
            const over = clipped.filter((c) => c.lastSample >= done.firstSample && c.firstSample < done.endSample);
            if (over.length) {
              reject(new Error(overloadMessage(over, settings.sampleRate)));
              return;
            }
            try {
              resolve(done.result(pipeline.wallTimeAt(done.endSample - 1)));
            } catch (err) {
              reject(err);
            }
          });
        }
      }),
      pipeline.on('clip', (c) => {
        if (capture) clipped.push(c);
      }),
      pipeline.on('gap', (g) => capture?.gap(g.sample + g.lost)),
      pipeline.on('end', () => {
        stop();
        reject(
          new Error(
            `baseline capture: the stream ended after ${(taken / settings.sampleRate).toFixed(1)} s of the ${o.seconds} s span`,
          ),
        );
      }),
    );
  });
  return {
    result,
    progress: () => taken / samples,
    cancel: () => cancel(),
  };
}
