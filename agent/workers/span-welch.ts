// The Welch mean of one long record on several threads: the segments are cut into contiguous spans, one per
// worker, each worker averages its span of the shared samples (a SharedArrayBuffer, so nothing is copied), and the
// span means are combined weighted by their segment counts. Segment starts are those of the one-thread estimate
// (multiples of the step from sample 0), so the result is the same estimate up to the order of the additions
// (relative differences of order 1e-16, not bit-identical to one thread).
import { Worker } from 'node:worker_threads';
import type { WelchOptions } from '../../dsp/welch.ts';
import type { FromSpanWorker, ToSpanWorker } from './span-messages.ts';
import { workerScript } from './worker-script.ts';
import { welchStep } from '../../dsp/welch.ts';

export class SpanWelch {
  private readonly workers: Worker[];
  private readonly pending = new Map<number, { resolve: (m: FromSpanWorker) => void; reject: (e: Error) => void }>();
  private nextId = 0;

  constructor(readonly threads: number) {
    if (!Number.isInteger(threads) || threads < 1)
      throw new RangeError(`SpanWelch: threads must be a positive integer, got ${threads}`);
    const script = workerScript('span-worker.mjs');
    this.workers = Array.from({ length: threads }, () => {
      const w = new Worker(script);
      w.on('message', (m: FromSpanWorker) => {
        const p = this.pending.get(m.id);
        this.pending.delete(m.id);
        p?.resolve(m);
      });
      w.on('error', (err) => {
        for (const p of this.pending.values()) p.reject(new Error(`span worker failed: ${err.message}`));
        this.pending.clear();
      });
      return w;
    });
  }

  /** One-sided mean estimate of samples (SharedArrayBuffer-backed) with the options' segment, window, overlap, detrend. */
  async psd(samples: Float64Array, options: WelchOptions): Promise<{ psd: Float64Array; segments: number }> {
    if (!(samples.buffer instanceof SharedArrayBuffer)) {
      throw new TypeError('SpanWelch.psd: samples must live in a SharedArrayBuffer (workers read them in place)');
    }
    const step = welchStep(options.segment, options.overlap);
    const total = samples.length < options.segment ? 0 : Math.floor((samples.length - options.segment) / step) + 1;
    if (total === 0)
      throw new RangeError(`SpanWelch.psd: ${samples.length} samples hold no segment of ${options.segment}`);
    const spans = Math.min(this.workers.length, total);
    const parts = await Promise.all(
      Array.from({ length: spans }, (_, w) => {
        const first = Math.floor((w * total) / spans);
        const end = Math.floor(((w + 1) * total) / spans);
        const id = this.nextId++;
        const m: ToSpanWorker = { kind: 'span', id, samples, options, first, end };
        return new Promise<FromSpanWorker>((resolve, reject) => {
          this.pending.set(id, { resolve, reject });
          this.workers[w].postMessage(m);
        });
      }),
    );
    const psd = new Float64Array(parts[0].psd.length);
    for (const p of parts) for (let k = 0; k < psd.length; k++) psd[k] += p.psd[k] * p.segments;
    for (let k = 0; k < psd.length; k++) psd[k] /= total;
    return { psd, segments: total };
  }

  async close(): Promise<void> {
    await Promise.all(this.workers.map((w) => w.terminate()));
  }
}
