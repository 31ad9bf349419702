// Messages between SpanWelch (agent/workers/span-welch.ts) and a span worker.
import type { WelchOptions } from '../../dsp/welch.ts';

/** Segments [first, end) of the shared samples, each starting at index × step. */
export type ToSpanWorker = {
  kind: 'span';
  id: number;
  samples: Float64Array;
  options: WelchOptions;
  first: number;
  end: number;
};

/** The mean |X|² row of the span as a scaled estimate, and the segments in it. */
export type FromSpanWorker = { kind: 'span'; id: number; psd: Float64Array; segments: number };
