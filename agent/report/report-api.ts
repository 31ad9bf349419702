// GET /api/report?from=&to=: the test-record report of a span of the agent's history store as one HTML page (the
// dashboard's Report button asks for the span its timeline shows). Read-only, behind the same token and origin
// checks as /api/trend. Bounded cost: one report at a time (a second request gets 429), built on a worker thread
// (the store reads never stall the live analysis) and stopped after REPORT_TIMEOUT_MS.
import type { ServerResponse } from 'node:http';
import { Worker } from 'node:worker_threads';
import { BadParameter, send, sendNoHistory, time } from '../store/api.ts';
import { workerScript } from '../workers/worker-script.ts';
import type { ReportJob, ReportJobResult } from './report-job.ts';

export const REPORT_TIMEOUT_MS = 120_000;

let running = false;

function fail(res: ServerResponse, status: number, code: string, message: string, head: boolean): void {
  send(res, status, { error: { code, message } }, head);
}

/** Answers /api/report; returns false for other paths. */
export function handleReportApi(
  path: string,
  url: URL,
  res: ServerResponse,
  head: boolean,
  storePath: string | undefined,
): boolean {
  if (path !== '/api/report') return false;
  if (!storePath) {
    sendNoHistory(res, head);
    return true;
  }
  let job: ReportJob;
  try {
    job = { storePath, span: { from: time(url, 'from'), to: time(url, 'to') }, generatedAt: new Date().toISOString() };
  } catch (err) {
    if (!(err instanceof BadParameter)) throw err;
    fail(res, 400, 'bad-query', err.message, head);
    return true;
  }
  if (running) {
    res.setHeader('retry-after', '5');
    fail(res, 429, 'busy', 'a report is being built; ask again when it is done', head);
    return true;
  }
  running = true;
  const worker = new Worker(workerScript('report-worker.mjs'), { workerData: job });
  const timer = setTimeout(() => void worker.terminate(), REPORT_TIMEOUT_MS);
  let answered = false;
  const done = (r: ReportJobResult): void => {
    if (answered) return;
    answered = true;
    clearTimeout(timer);
    running = false;
    void worker.terminate();
    if (!r.ok) {
      // An empty span is the asker's to fix (400); anything else is ours (500).
      fail(
        res,
        r.code === 'EMPTY_SPAN' ? 400 : 500,
        r.code === 'EMPTY_SPAN' ? 'empty-span' : 'failed',
        r.message,
        head,
      );
      return;
    }
    res.writeHead(200, {
      'content-type': 'text/html; charset=utf-8',
      'cache-control': 'no-store',
      'content-security-policy': "default-src 'none'; style-src 'unsafe-inline'; img-src data:",
      'content-length': Buffer.byteLength(r.html),
    });
    res.end(head ? undefined : r.html);
  };
  worker.once('message', done);
  worker.once('error', (err) => done({ ok: false, code: 'failed', message: err.message }));
  worker.once('exit', () =>
    done({
      ok: false,
      code: 'failed',
      message: `the report worker stopped before it answered (it may take at most ${REPORT_TIMEOUT_MS / 1000} s)`,
    }),
  );
  return true;
}
