// Worker thread: the Welch mean of one span of segments of samples shared with the caller (no copy).
import { parentPort } from 'node:worker_threads';
import { WelchEstimator, welchStep } from '../../dsp/welch.ts';
import type { FromSpanWorker, ToSpanWorker } from './span-messages.ts';

const port = parentPort;
if (!port) throw new Error('span-worker.mjs must run as a worker thread');

port.on('message', (m: ToSpanWorker) => {
  const est = new WelchEstimator({ ...m.options, averaging: { mode: 'mean' }, firstSample: m.first * stepOf(m) });
  const start = m.first * stepOf(m);
  est.push(m.samples, start, (m.end - 1) * stepOf(m) + m.options.segment);
  const psd = est.psd();
  const reply: FromSpanWorker = { kind: 'span', id: m.id, psd, segments: est.segmentsUsed };
  port.postMessage(reply, [psd.buffer as ArrayBuffer]);
});

function stepOf(m: ToSpanWorker): number {
  return welchStep(m.options.segment, m.options.overlap);
}
