// Sends a note to a running agent over its WebSocket (the dashboard's control channel) and waits for the reply.
import WebSocket from 'ws';
import { InputError, UsageError } from '../../errors.ts';

export async function noteThroughAgent(
  agentUrl: string,
  text: string,
  incident: string | undefined,
): Promise<{ sample: number; t: number; wallTime: string }> {
  let url: URL;
  try {
    url = new URL(agentUrl);
  } catch {
    throw new UsageError(
      `floorline note: --agent '${agentUrl}' is not a URL; give the dashboard URL the agent printed, e.g. http://127.0.0.1:8731/`,
    );
  }
  if (url.protocol !== 'http:' && url.protocol !== 'https:')
    throw new UsageError(`floorline note: --agent needs an http:// URL, got ${url.protocol}`);
  const ws = new URL(url.toString());
  ws.protocol = url.protocol === 'https:' ? 'wss:' : 'ws:';
  ws.pathname = '/ws';
  return new Promise((resolve, reject) => {
    const sock = new WebSocket(ws.toString(), { perMessageDeflate: false, maxPayload: 16 << 20 });
    const timer = setTimeout(() => {
      sock.terminate();
      reject(new InputError(`floorline note: the agent at ${url.host} did not answer within 10 s.`));
    }, 10_000);
    const done = (fn: () => void) => {
      clearTimeout(timer);
      sock.close();
      fn();
    };
    sock.on('error', (err) =>
      done(() =>
        reject(
          new InputError(
            `floorline note: cannot reach the agent at ${url.host} (${err.message}); is it running? Without one, use --data DIR.`,
          ),
        ),
      ),
    );
    sock.on('unexpected-response', (_req, res) =>
      done(() =>
        reject(
          new InputError(
            `floorline note: the agent refused the connection (HTTP ${res.statusCode}); add ?token=… to the URL if it has one.`,
          ),
        ),
      ),
    );
    sock.on('open', () => sock.send(JSON.stringify({ type: 'note', id: 1, text, ...(incident ? { incident } : {}) })));
    sock.on('message', (data) => {
      let m: {
        type?: string;
        id?: number;
        ok?: boolean;
        result?: { sample: number; t: number; wallTime: string };
        error?: { message: string };
      };
      try {
        m = JSON.parse(data.toString());
      } catch {
        return;
      }
      if (m.type !== 'reply' || m.id !== 1) return;
      if (m.ok && m.result) done(() => resolve(m.result!));
      else
        done(() =>
          reject(
            new InputError(`floorline note: the agent refused the note: ${m.error?.message ?? 'no reason given'}.`),
          ),
        );
    });
  });
}
