// Worker thread: the pipeline's Welch estimators and cross-spectra (one Analyser, the same class the pipeline runs on
// its own thread), fed through shared memory (analysis-layout.ts). It waits for a command, runs it, writes the
// snapshots a block produced and says it is done; commands come one at a time and in the pipeline's order, so its
// estimates are those of a one-thread run. A failure is flagged in shared memory, where a waiting pipeline sees it.
import { workerData } from 'node:worker_threads';
import { Analyser } from '../pipeline/analyser.ts';
import {
  AnalysisViews,
  CLEAR_AT,
  COMMAND,
  DONE,
  PROCESS,
  QUIT,
  RECONFIGURE,
  RESTART_AT,
  snapshotStride,
  type AnalysisWorkerData,
} from './analysis-layout.ts';

const data = workerData as AnalysisWorkerData;
const views = new AnalysisViews(data.shared);
const stride = snapshotStride(data.shared);
const make = (choice: AnalysisWorkerData['choice'], averaging: AnalysisWorkerData['averaging'], start: number) =>
  new Analyser(data.info, choice, averaging, data.snapshotRate, start, data.pairs);
let analyser = make(data.choice, data.averaging, data.startSample);
const results = views.results;
let count = 0;
const onInstant = (sample: number): void => {
  analyser.writeSnapshot(sample, results, 1 + count * stride);
  count++;
};

let seen = 0;
try {
  for (;;) {
    Atomics.wait(views.control, COMMAND, seen);
    seen = Atomics.load(views.control, COMMAND);
    const n = views.numbers;
    const kind = n[0];
    if (kind === QUIT) break;
    if (kind === PROCESS) {
      count = 0;
      analyser.process(views.samples, n[1], n[2], onInstant);
      results[0] = count;
    } else if (kind === RESTART_AT) analyser.restartAt(n[1]);
    else if (kind === CLEAR_AT) analyser.clearAt(n[1], n[2]);
    else if (kind === RECONFIGURE) {
      const text = new TextDecoder().decode(views.json.slice(0, n[4]));
      const { choice, averaging } = JSON.parse(text) as Pick<AnalysisWorkerData, 'choice' | 'averaging'>;
      analyser = make(choice, averaging, n[1]);
    } else throw new Error(`analysis worker: unknown command ${kind}`);
    Atomics.store(views.control, DONE, seen);
    Atomics.notify(views.control, DONE);
  }
} catch (err) {
  const e = err as Error;
  views.fail(e.stack ?? e.message);
  throw err;
}
