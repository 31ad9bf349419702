// Worker thread behind GET /api/report: builds one report off the agent's main thread, so reading a long span of
// the store never holds up the live analysis. Captures are linked to the server's /files/ route.
import { parentPort, workerData } from 'node:worker_threads';
import { buildReport } from './build-report.ts';
import type { ReportJob, ReportJobResult } from './report-job.ts';

const job = workerData as ReportJob;
const port = parentPort;
if (!port) throw new Error('report-worker.mjs must run as a worker thread');

const parts: string[] = [];
buildReport(
  job.storePath,
  job.span,
  {
    generatedAt: job.generatedAt,
    link: (_file, capture) => `/files/${capture.split('/').map(encodeURIComponent).join('/')}`,
  },
  (part) => parts.push(part),
).then(
  () => port.postMessage({ ok: true, html: parts.join('\n') } satisfies ReportJobResult),
  (err: Error & { code?: string }) =>
    port.postMessage({ ok: false, code: err.code ?? 'failed', message: err.message } satisfies ReportJobResult),
);
