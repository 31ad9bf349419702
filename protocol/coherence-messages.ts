// The live coherence trace: magnitude-squared coherence per bin of each channel pair the pipeline cross-analyses,
// sent about once per second of sample time (a display, not a measurement: values to 6 significant digits).
// Pure types and the rounding rule, shared by the agent and the dashboard.

export interface CoherenceTracePair {
  a: string;
  b: string;
  /** Overlap-corrected equivalent averages behind the estimate (its chance bound depends on them). */
  equivalentAverages: number;
  /** γ² per bin from bin 0 to Nyquist, 0..1, on the spectrum's bins (scipy.signal.coherence conventions). */
  coherence: number[];
}

export interface CoherenceTraceMessage {
  type: 'coherence';
  /** Sample index of the snapshot the trace belongs to. */
  sample: number;
  t: number;
  binHz: number;
  pairs: CoherenceTracePair[];
}

/** Significant digits a trace value keeps on the wire. */
export const COHERENCE_TRACE_DIGITS = 6;

export function traceValue(x: number): number {
  return Number.isFinite(x) ? Number(x.toPrecision(COHERENCE_TRACE_DIGITS)) : 0;
}
