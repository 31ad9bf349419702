// Worker thread: the live low-frequency view of the channels it owns. Blocks arrive as slot indices of shared
// memory and go through the same LiveLowFrequency as on the agent's thread, in the order posted, so its frames
// are those of a one-thread run; each slot is released once pushed. The status goes with every update and after
// a start or gap (between updates it would only move the peak-to-peak figures by a block). A failure is flagged in shared memory first
// (an agent waiting for a slot is blocked and cannot read messages), then reported and thrown.
import { parentPort, workerData } from 'node:worker_threads';
import { LiveLowFrequency } from '../lowfreq/live-low-frequency.ts';
import { SlotReader } from './block-slots.ts';
import type { FromLowFrequencyWorker, LowFrequencyWorkerData, ToLowFrequencyWorker } from './lowfreq-messages.ts';

const port = parentPort;
if (!port) throw new Error('lowfreq-worker.mjs must run as a worker thread');
const data = workerData as LowFrequencyWorkerData;
const slots = new SlotReader(data.slots);
const view = new LiveLowFrequency(data.view);
const send = (m: FromLowFrequencyWorker): void => port.postMessage(m);
view.onContext((context) => send({ kind: 'context', context }));
const sendStatus = (): void => send({ kind: 'status', status: view.status() });
view.onUpdate((update) => {
  send({ kind: 'update', update });
  sendStatus();
});

port.on('message', (m: ToLowFrequencyWorker) => {
  try {
    if (m.kind === 'block') {
      const channels = slots.read(m.slot);
      try {
        view.block(m.firstSample, m.frames, channels);
      } finally {
        slots.release();
      }
    } else if (m.kind === 'info') {
      view.start(m.sampleRate, m.channels, m.firstSample);
      sendStatus();
    } else if (m.kind === 'gap') {
      view.gap(m.gap);
      sendStatus();
    } else send({ kind: 'done' });
  } catch (err) {
    const e = err as Error;
    slots.fail(e.message);
    send({ kind: 'failed', message: e.stack ?? e.message });
    throw err;
  }
});
