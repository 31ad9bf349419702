// Delivery to one sink: an HTTP(S) webhook (POST of the JSON body, with the configured headers, e.g. a bearer
// token) or a program run directly from an argument array — never through a shell — with the JSON on stdin.
// Each call resolves on success and rejects with a short reason; the outbox decides about retries.
import { spawn } from 'node:child_process';
import type { SinkConfig } from '../config/rig-config.ts';

export const DELIVERY_TIMEOUT_MS = 10_000;

export type Deliver = (body: string) => Promise<void>;

async function postWebhook(
  url: string,
  headers: Record<string, string>,
  body: string,
  timeoutMs: number,
): Promise<void> {
  const res = await fetch(url, {
    method: 'POST',
    headers: { 'content-type': 'application/json', ...headers },
    body,
    signal: AbortSignal.timeout(timeoutMs),
    redirect: 'error',
  });
  // Drain the body so the connection is reused; the receiver's text is not logged (it may echo secrets).
  await res.arrayBuffer().catch(() => undefined);
  if (res.status < 200 || res.status >= 300) throw new Error(`HTTP ${res.status}`);
}

function runProgram(argv: readonly string[], body: string, timeoutMs: number): Promise<void> {
  return new Promise((resolve, reject) => {
    const child = spawn(argv[0], argv.slice(1), {
      shell: false,
      stdio: ['pipe', 'ignore', 'ignore'],
      timeout: timeoutMs,
    });
    child.on('error', (err) =>
      reject(new Error(`cannot run ${argv[0]}: ${(err as NodeJS.ErrnoException).code ?? err.message}`)),
    );
    child.on('close', (code, signal) =>
      code === 0
        ? resolve()
        : reject(new Error(signal ? `${argv[0]} killed by ${signal}` : `${argv[0]} exited ${code}`)),
    );
    child.stdin.on('error', () => undefined); // a program that does not read stdin still counts by its exit code
    child.stdin.end(body + '\n'); // one JSON line, so a program appending stdin to a file keeps JSON Lines
  });
}

export function sinkDeliver(sink: SinkConfig, timeoutMs = DELIVERY_TIMEOUT_MS): Deliver {
  if ('webhook' in sink) return (body) => postWebhook(sink.webhook, sink.headers ?? {}, body, timeoutMs);
  return (body) => runProgram(sink.exec, body, timeoutMs);
}

/** How a sink is named in logs and events: the URL without credentials or query, or the program path. */
export function sinkLabel(sink: SinkConfig): string {
  if ('webhook' in sink) {
    try {
      const u = new URL(sink.webhook);
      return `${u.protocol}//${u.host}${u.pathname}`;
    } catch {
      return 'webhook';
    }
  }
  return sink.exec[0];
}
