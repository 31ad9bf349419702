// The live coherence trace message from a snapshot that carries channel-pair coherence: at most one per second of
// sample time (the page draws it; the rule judges every snapshot on the agent).
import type { ServerSnapshot } from './backend.ts';
import { traceValue, type CoherenceTraceMessage } from '../../protocol/coherence-messages.ts';

export function coherenceTrace(s: ServerSnapshot, lastSentSample: number): CoherenceTraceMessage | null {
  if (!s.coherence?.length) return null;
  if (s.sample - lastSentSample < s.settings.sampleRate) return null;
  return {
    type: 'coherence',
    sample: s.sample,
    t: s.t,
    binHz: s.binHz,
    pairs: s.coherence.map((p) => ({
      a: p.a,
      b: p.b,
      equivalentAverages: p.equivalentAverages,
      coherence: Array.from(p.coherence, traceValue),
    })),
  };
}
