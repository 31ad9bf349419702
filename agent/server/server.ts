// HTTP + WebSocket server of the agent: dashboard assets, /api/status, /metrics, read-only data files, and /ws
// (JSON control messages in, JSON messages and binary frames out). Binds 127.0.0.1 by default.
import { coherenceTrace } from './coherence-trace.ts';
import { createServer, type IncomingMessage, type ServerResponse } from 'node:http';
import type { AddressInfo } from 'node:net';
import { WebSocketServer, type WebSocket, type RawData } from 'ws';
import { channelFrontOf } from './channel-front.ts';
import { limitMasksMessage } from './channel-masks.ts';
import type { LimitMasksMessage } from '../../protocol/limit-masks.ts';
import type { StreamInfo } from '../../protocol/stream.ts';
import { WIRE_PROTOCOL_VERSION, type AgentStatus, type SpectrumContext } from '../../protocol/messages.ts';
import { parseClientMessage } from './validate.ts';
import type { ServerBackend, ServerSnapshot } from './backend.ts';
import { checkAccess, tokenCookie } from './access.ts';
import { resolveServerOptions, ServerConfigError, type ServerOptions } from './options.ts';
import { Broadcaster } from './broadcaster.ts';
import { FLOORLINE_VERSION } from '../build-info.ts';
import { handleReportApi } from '../report/report-api.ts';
import { TokenBucket } from './rate-limit.ts';
import { ClientConnection } from './client.ts';
import { handleRequest } from './control.ts';
import { renderMetrics, OPENMETRICS_CONTENT_TYPE } from './metrics.ts';
import { sendError, sendFileInside } from './static-files.ts';
import { handleHistoryApi } from '../store/api.ts';
import { handleSpectraApi } from '../store/spectra-api.ts';

export const AGENT_VERSION = FLOORLINE_VERSION;
const EVENTS_ON_CONNECT = 200;

export interface RunningServer {
  /** e.g. http://127.0.0.1:8731/, never with the token (it would end up in terminals, logs and shell history). */
  url: string;
  /** The URL with ?token=… when a token is set (printed only when asked: --show-token). */
  urlWithToken: string;
  port: number;
  host: string;
  status(): AgentStatus;
  /** Open HTTP connections now (the budget is maxConnections). */
  connections(): Promise<number>;
  /** Frame buffers created so far and free for reuse (bounded: frames are pooled, not allocated per send). */
  poolStats(): { created: number; free: number };
  close(): Promise<void>;
}

const SECURITY_HEADERS = {
  'x-content-type-options': 'nosniff',
  'referrer-policy': 'no-referrer',
  'x-frame-options': 'DENY',
  'content-security-policy':
    "default-src 'self'; img-src 'self' data: blob:; style-src 'self' 'unsafe-inline'; connect-src 'self'; frame-ancestors 'none'",
};

/** The request target as a URL, or null when it does not parse (checked before anything else reads it). */
function requestUrl(req: IncomingMessage): URL | null {
  try {
    return new URL(req.url ?? '/', 'http://agent.invalid');
  } catch {
    return null;
  }
}

function contextOf(s: ServerSnapshot, id: number, mainsHz: number | null, info: StreamInfo | null): SpectrumContext {
  return {
    id,
    settings: s.settings,
    averaging: s.averaging,
    nenbw: s.nenbw,
    enbwHz: s.enbwHz,
    binHz: s.binHz,
    bins: s.channels[0]?.psd.length ?? 0,
    channels: s.channels.map((c, i) => {
      const front = info?.channels[i] ? channelFrontOf(info.channels[i]) : undefined;
      return { name: c.name, unit: c.unit, ...(front ? { front } : {}) };
    }),
    mainsHz,
  };
}

/** Unanswered heartbeat pings in a row before a client is dropped as gone. */
const MISSED_PONGS = 2;

export async function startServer(
  backend: ServerBackend,
  partial: Partial<ServerOptions> & { assetsDir: string; warn?: (line: string) => void },
): Promise<RunningServer> {
  const options = resolveServerOptions(partial);
  const hub = new Broadcaster(options.traceLength, (id, reason) =>
    (partial.warn ?? ((l: string) => process.stderr.write(l + '\n')))(`dashboard client ${id} dropped: ${reason}`),
  );
  let context: SpectrumContext | null = null;
  let contextKey = '';
  let nextClientId = 1;

  // Status is computed at most once per status tick and shared by the push, get-status replies and /api/status:
  // many clients asking often cost one computation, not one each.
  const computeStatus = (): AgentStatus => ({
    protocol: WIRE_PROTOCOL_VERSION,
    ...backend.status(),
    clients: hub.totals(),
    mainsHz: backend.mainsHz(),
    wallTime: new Date().toISOString(),
  });
  let shared: { at: number; value: AgentStatus; json: string } | null = null;
  const sharedStatus = (): { value: AgentStatus; json: string } => {
    const now = performance.now();
    if (!shared || now - shared.at >= options.statusIntervalMs) {
      const value = computeStatus();
      shared = { at: now, value, json: JSON.stringify(value) };
    }
    return shared;
  };
  const status = (): AgentStatus => sharedStatus().value;
  let lastControlAt = -Infinity;
  let contextWaiters: ((c: SpectrumContext | null) => void)[] = [];
  /** The context once a settings change has reached the spectra (or the current one after 2 s). */
  const contextAfterChange = (): Promise<SpectrumContext | null> =>
    new Promise((resolve) => {
      const timer = setTimeout(() => {
        contextWaiters = contextWaiters.filter((w) => w !== done);
        resolve(context);
      }, 2000);
      const done = (c: SpectrumContext | null): void => {
        clearTimeout(timer);
        resolve(c);
      };
      contextWaiters.push(done);
    });

  /** Returns true when the context changed (and tells every client). */
  const updateContext = (s: ServerSnapshot): boolean => {
    // Not the mains frequency: a measured one drifts, and a new context makes every page rebuild its charts.
    const key = JSON.stringify([
      s.settings,
      s.averaging,
      s.nenbw,
      s.binHz,
      s.channels.map((c) => [c.name, c.unit, c.psd.length]),
    ]);
    if (key === contextKey) return false;
    contextKey = key;
    context = contextOf(s, (context?.id ?? 0) + 1, backend.mainsHz(), backend.streamInfo());
    hub.json({ type: 'context', context });
    const waiting = contextWaiters;
    contextWaiters = [];
    for (const w of waiting) w(context);
    return true;
  };

  const sendBaseline = (only?: ClientConnection): void => {
    const b = backend.baseline();
    if (!b || b.channels.length === 0 || context === null) return;
    const frame = hub.baselineFrame(b, context.id);
    if (only) {
      only.offerFrame('baseline', frame);
      frame.release();
    } else hub.offer('baseline', frame);
  };

  // The limit masks for the page: sent after hello and again when the stream (its channels) changes.
  const warn = partial.warn ?? ((l: string) => process.stderr.write(l + '\n'));
  let masksSent = '';
  let masksProblem = '';
  const currentMasks = (): LimitMasksMessage | null => {
    if (!backend.limitMasks) return null;
    const r = limitMasksMessage(backend.streamInfo(), backend.limitMasks());
    if ('message' in r) return r.message;
    if (r.problem !== masksProblem) warn(`limit masks not sent to the dashboard: ${r.problem}`);
    masksProblem = r.problem;
    return null;
  };
  const broadcastMasks = (): void => {
    const m = currentMasks();
    const json = m && m.masks.length > 0 ? JSON.stringify(m) : '';
    if (json === masksSent) return;
    masksSent = json;
    hub.json(m ?? { type: 'masks', masks: [] });
  };

  let lastBaselineFile: string | null = null;
  let lastCoherenceSample = -Infinity;
  const unsubscribe = backend.subscribe({
    info: (info) => {
      hub.resetTrace(info.channels.length);
      hub.json({ type: 'info', info });
      broadcastMasks();
    },
    block: (block) => hub.block(block),
    snapshot: (s) => {
      if (s.channels.length === 0) return;
      const changed = updateContext(s);
      const file = backend.baseline()?.file ?? null;
      if (changed || file !== lastBaselineFile) {
        lastBaselineFile = file;
        sendBaseline();
      }
      if (hub.clients.size === 0) return;
      hub.offer('spectrum', hub.spectrumFrame(s, context!.id));
      const coherence = coherenceTrace(s, lastCoherenceSample);
      if (coherence) {
        lastCoherenceSample = s.sample;
        hub.json(coherence);
      }
      const trace = hub.traceFrame(s.settings.sampleRate);
      if (trace) hub.offer('trace', trace);
    },
    event: (event) => hub.json({ type: 'event', event }),
    lowFrequency: (m) => hub.json(m),
  });

  const httpServer = createServer({ requestTimeout: 15_000, headersTimeout: 10_000 }, (req, res) =>
    onRequest(req, res),
  );
  // Half-open connections must not use up the file handles recordings need (EMFILE): a fixed budget, beyond it
  // new connections are dropped at once.
  httpServer.maxConnections = options.maxConnections;
  const wss = new WebSocketServer({
    noServer: true,
    maxPayload: options.maxPayload,
    perMessageDeflate: false,
    clientTracking: false,
  });

  function onRequest(req: IncomingMessage, res: ServerResponse): void {
    for (const [k, v] of Object.entries(SECURITY_HEADERS)) res.setHeader(k, v);
    const url = requestUrl(req);
    if (!url) {
      sendError(res, 400, 'bad-url', 'request target is not a valid path');
      return;
    }
    const verdict = checkAccess(req, url, options);
    if (!verdict.ok) {
      sendError(res, verdict.status, verdict.status === 401 ? 'token' : 'forbidden', verdict.reason);
      return;
    }
    if (verdict.viaQuery && options.token) res.setHeader('set-cookie', tokenCookie(options.token));
    if (req.method !== 'GET' && req.method !== 'HEAD') {
      res.setHeader('allow', 'GET, HEAD');
      sendError(res, 405, 'method', `${req.method} is not served; the agent is controlled over /ws`);
      return;
    }
    const head = req.method === 'HEAD';
    const path = url.pathname;
    if (path === '/healthz') {
      // For supervisors: 200 while samples arrive and analysis keeps up, else 503 with the reason.
      const h = backend.health?.() ?? { ok: true, reason: 'no health checks' };
      res.writeHead(h.ok ? 200 : 503, {
        'content-type': 'application/json; charset=utf-8',
        'cache-control': 'no-store',
      });
      res.end(head ? undefined : JSON.stringify({ ok: h.ok, reason: h.reason }));
    } else if (path === '/api/status') {
      const body = sharedStatus().json;
      res.writeHead(200, { 'content-type': 'application/json; charset=utf-8', 'cache-control': 'no-store' });
      res.end(head ? undefined : body);
    } else if (handleHistoryApi(path, url, res, head, backend.history?.path)) {
      // /api/trend, /api/incidents: answered from the history store
    } else if (handleSpectraApi(path, url, res, head, backend.history?.path)) {
      // /api/spectra, /api/spectrum: kept spectra from the history store
    } else if (handleReportApi(path, url, res, head, backend.history?.path)) {
      // /api/report: the test-record report of a span, as HTML
    } else if (path === '/metrics') {
      res.writeHead(200, { 'content-type': OPENMETRICS_CONTENT_TYPE, 'cache-control': 'no-store' });
      res.end(head ? undefined : renderMetrics(status(), AGENT_VERSION));
    } else if (path.startsWith('/files/')) {
      let name: string;
      try {
        name = decodeURIComponent(path.slice('/files/'.length));
      } catch {
        sendError(res, 400, 'bad-path', 'file path is not valid percent-encoding');
        return;
      }
      sendFileInside(res, backend.dataRoot, name, head, true);
    } else if (path === '/' || path === '/index.html') {
      sendFileInside(res, options.assetsDir, 'index.html', head, false);
    } else if (/^\/[A-Za-z0-9_-]+\.(js|css|map|svg|png)$/.test(path)) {
      sendFileInside(res, options.assetsDir, path.slice(1), head, false);
    } else {
      sendError(res, 404, 'not-found', `nothing at ${path}`);
    }
  }

  httpServer.on('upgrade', (req, socket, head) => {
    const url = requestUrl(req);
    const verdict = !url
      ? ({ ok: false, status: 400, reason: 'request target is not a valid path' } as const)
      : url.pathname === '/ws'
        ? checkAccess(req, url, options)
        : ({ ok: false, status: 403, reason: 'WebSocket lives at /ws' } as const);
    if (!verdict.ok) {
      const text = verdict.status === 401 ? 'Unauthorized' : verdict.status === 400 ? 'Bad Request' : 'Forbidden';
      socket.end(
        `HTTP/1.1 ${verdict.status} ${text}\r\nconnection: close\r\ncontent-type: text/plain\r\n\r\n${verdict.reason}\n`,
      );
      return;
    }
    if (hub.clients.size >= options.maxClients) {
      socket.end(
        `HTTP/1.1 503 Service Unavailable\r\nconnection: close\r\ncontent-type: text/plain\r\nretry-after: 10\r\n\r\n` +
          `the agent serves at most ${options.maxClients} dashboard connections at once; close one and retry\n`,
      );
      return;
    }
    wss.handleUpgrade(req, socket, head, (ws) => onConnection(ws));
  });

  function onConnection(ws: WebSocket): void {
    const client = new ClientConnection(
      nextClientId++,
      ws,
      options.maxBufferedBytes,
      1000 / options.maxFramesPerSecond,
    );
    hub.add(client);
    ws.on('pong', () => (client.unansweredPings = 0));
    ws.on('close', () => hub.remove(client));
    ws.on('error', () => hub.remove(client)); // e.g. a message over maxPayload: ws closes that socket with 1009
    const bucket = new TokenBucket(options.maxMessagesPerSecond, 2 * options.maxMessagesPerSecond);
    ws.on('message', (data: RawData, isBinary: boolean) => {
      if (!bucket.take()) {
        // 1008 (policy violation, RFC 6455 §7.4.1): the reason names the limit.
        client.close(1008, `more than ${options.maxMessagesPerSecond} messages per second`);
        client.droppedFor = `more than ${options.maxMessagesPerSecond} messages per second`;
        hub.remove(client);
        return;
      }
      if (isBinary) {
        client.sendJson({
          type: 'error',
          error: {
            code: 'binary-refused',
            message: 'send JSON text messages; binary frames only flow agent → dashboard',
          },
        });
        return;
      }
      const parsed = parseClientMessage(data.toString());
      if (!parsed.ok) {
        if (parsed.id !== undefined && parsed.request !== undefined) {
          client.sendJson({ type: 'reply', id: parsed.id, request: parsed.request, ok: false, error: parsed.error });
        } else client.sendJson({ type: 'error', error: parsed.error });
        return;
      }
      const m = parsed.message;
      if (
        m.type === 'recording' ||
        m.type === 'capture-baseline' ||
        m.type === 'set-analysis' ||
        m.type === 'restore-baseline'
      ) {
        const now = performance.now();
        const wait = lastControlAt + options.controlIntervalMs - now;
        if (wait > 0) {
          client.sendJson({
            type: 'reply',
            id: m.id,
            request: m.type,
            ok: false,
            error: {
              code: 'rate-limited',
              message: `at most one control action per ${options.controlIntervalMs} ms; try again in ${Math.ceil(wait)} ms`,
            },
          });
          return;
        }
        lastControlAt = now;
      }
      void handleRequest(m, { backend, context: () => context, contextAfterChange, status }).then((reply) =>
        client.sendJson(reply),
      );
    });
    const latest = backend.latestSnapshot();
    if (latest && latest.channels.length) updateContext(latest);
    client.sendJson({
      type: 'hello',
      protocol: WIRE_PROTOCOL_VERSION,
      info: backend.streamInfo(),
      context,
      status: status(),
      events: backend.recentEvents(EVENTS_ON_CONNECT),
    });
    const masks = currentMasks();
    if (masks && masks.masks.length > 0) client.sendJson(masks);
    sendBaseline(client);
    const lf = backend.lowFrequencyLatest?.();
    if (lf) {
      client.sendJson({ type: 'lowfreq-context', context: lf.context });
      if (lf.update) client.sendJson({ type: 'lowfreq', update: lf.update });
    }
    if (latest && latest.channels.length && context) {
      const f = hub.spectrumFrame(latest, context.id);
      client.offerFrame('spectrum', f);
      f.release();
    }
  }

  // A client is dropped after MISSED_PONGS pings in a row go unanswered. A tick that fires late means this agent was
  // busy: the pongs may be waiting unread in its socket, so that tick counts no misses (a loaded rig PC, or a
  // catch-up after a stall, must not cut off a healthy dashboard).
  let lastBeat = performance.now();
  const heartbeat = setInterval(() => {
    const now = performance.now();
    const late = now - lastBeat > 1.5 * options.heartbeatMs;
    lastBeat = now;
    for (const c of hub.clients) {
      if (!late && c.unansweredPings >= MISSED_PONGS) {
        c.terminate();
        hub.remove(c);
        continue;
      }
      c.unansweredPings++;
      c.ping();
    }
  }, options.heartbeatMs);
  const statusTimer = setInterval(() => {
    if (hub.clients.size) hub.json({ type: 'status', status: sharedStatus().value });
  }, options.statusIntervalMs);
  heartbeat.unref();
  statusTimer.unref();

  await new Promise<void>((resolve, reject) => {
    httpServer.once('error', (err: NodeJS.ErrnoException) => {
      const fix =
        err.code === 'EADDRINUSE'
          ? `port ${options.port} is in use; pick another with --http-port N`
          : `cannot listen on ${options.host}:${options.port} (${err.code ?? err.message})`;
      reject(new ServerConfigError(fix));
    });
    httpServer.listen(options.port, options.host, () => resolve());
  });
  const port = (httpServer.address() as AddressInfo).port;
  const hostInUrl = options.host.includes(':') && !options.host.startsWith('[') ? `[${options.host}]` : options.host;
  const url = `http://${hostInUrl}:${port}/`;
  const urlWithToken = `${url}${options.token ? `?token=${encodeURIComponent(options.token)}` : ''}`;

  return {
    url,
    urlWithToken,
    port,
    host: options.host,
    status: computeStatus, // fresh: for the agent itself and tests; clients share the tick's copy
    poolStats: () => hub.poolStats(),
    connections: () => new Promise<number>((resolve) => httpServer.getConnections((_err, n) => resolve(n))),
    close: async () => {
      clearInterval(heartbeat);
      clearInterval(statusTimer);
      unsubscribe();
      for (const c of [...hub.clients]) {
        c.close(1001, 'agent stopping');
        hub.remove(c);
      }
      wss.close();
      await new Promise<void>((resolve) => {
        httpServer.close(() => resolve());
        httpServer.closeAllConnections();
      });
    },
  };
}
