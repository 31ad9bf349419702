// Worker thread: the Welch estimators of the channels it owns. Blocks arrive as transferred buffers, are analysed
// in arrival order and handed back for reuse; 'finish' returns the estimates (their buffers transferred).
import { parentPort, workerData } from 'node:worker_threads';
import { makeEstimator, resultOf } from './channel-spectra.ts';
import type { ChannelWorkerData, FromChannelWorker, ToChannelWorker } from './channel-messages.ts';
import type { WelchEstimator } from '../../dsp/welch.ts';

const port = parentPort;
if (!port) throw new Error('channel-worker.mjs must run as a worker thread');
const { plan, channels } = workerData as ChannelWorkerData;
const estimators = new Map<number, WelchEstimator>(channels.map((c) => [c, makeEstimator(plan)]));

port.on('message', (m: ToChannelWorker) => {
  if (m.kind === 'block') {
    const est = estimators.get(m.channel);
    if (!est) throw new Error(`channel worker: channel ${m.channel} is not one of ${channels.join(', ')}`);
    est.push(m.samples, 0, m.frames);
    const reply: FromChannelWorker = { kind: 'free', channel: m.channel, samples: m.samples };
    port.postMessage(reply, [m.samples.buffer as ArrayBuffer]);
  } else {
    const results = channels.map((c) => ({ channel: c, ...resultOf(estimators.get(c)!) }));
    const reply: FromChannelWorker = { kind: 'result', results };
    port.postMessage(
      reply,
      results.map((r) => r.psd.buffer as ArrayBuffer),
    );
  }
});
