// Server options, their safe defaults, and the rule that a bind wider than loopback needs a token.
import { FloorlineError } from '../errors.ts';
export const DEFAULT_HTTP_PORT = 8731;
export const DEFAULT_HOST = '127.0.0.1';

export interface ServerOptions {
  host: string;
  /** 0 picks a free port (tests). */
  port: number;
  /** Required when host is not loopback; when set it is checked on every request, loopback too. */
  token?: string;
  /** Folder of the built dashboard (index.html, app.js, app.css). */
  assetsDir: string;
  /** Extra origins allowed to open the WebSocket besides the page's own (e.g. a reverse proxy's). */
  allowedOrigins: string[];
  /** Largest client message, bytes; larger closes that client (1009). */
  maxPayload: number;
  /** Bytes queued to one client beyond which it is closed as too slow (spectrum frames are skipped long before). */
  maxBufferedBytes: number;
  /** WebSocket ping interval; a client that missed the previous pong is dropped. */
  heartbeatMs: number;
  /** How often status is pushed to clients (wall clock: status is a label, not a measurement). */
  statusIntervalMs: number;
  /** Samples per channel in the time-trace frame. */
  traceLength: number;
  /** Most binary frames of one kind per second to one client (display pacing; newer frames replace waiting ones). */
  maxFramesPerSecond: number;
  /** Most WebSocket clients at once; more are refused (503) at the upgrade. */
  maxClients: number;
  /** Messages one client may send per second on average (bursts of twice that); beyond, it is closed with 1008. */
  maxMessagesPerSecond: number;
  /** Least wall time between two control actions (recording, capture-baseline, set-analysis), agent-wide, ms. */
  controlIntervalMs: number;
  /** Print the dashboard URL with its ?token=… (the CLI's --show-token). */
  showToken?: boolean;
  /** Most open HTTP connections; kept well below the process's file-handle limit so recordings can always open files. */
  maxConnections: number;
}

/** Open connections allowed for a file-handle limit: a quarter of it, at most 128, so files always have room. */
export function connectionBudget(openFiles: number | undefined): number {
  if (openFiles === undefined) return 128;
  return Math.max(4, Math.min(128, Math.floor(openFiles / 4)));
}

export class ServerConfigError extends FloorlineError {
  override readonly name = 'ServerConfigError';
  constructor(message: string) {
    super('SERVER_CONFIG', message);
  }
}

const LOOPBACK = new Set(['127.0.0.1', 'localhost', '::1', '[::1]']);

export function isLoopbackHost(host: string): boolean {
  return LOOPBACK.has(host.toLowerCase()) || /^127\.\d{1,3}\.\d{1,3}\.\d{1,3}$/.test(host);
}

/** Tokens shorter than this are refused: a guessable token on an open port is no protection. */
export const MIN_TOKEN_LENGTH = 16;

export function resolveServerOptions(partial: Partial<ServerOptions> & { assetsDir: string }): ServerOptions {
  const o: ServerOptions = {
    host: DEFAULT_HOST,
    port: DEFAULT_HTTP_PORT,
    allowedOrigins: [],
    maxPayload: 4096,
    maxBufferedBytes: 8 * 1024 * 1024,
    heartbeatMs: 15_000,
    statusIntervalMs: 500,
    traceLength: 2048,
    maxFramesPerSecond: 20,
    maxClients: 16,
    maxMessagesPerSecond: 20,
    controlIntervalMs: 1000,
    maxConnections: 128,
    ...partial,
  };
  if (!Number.isInteger(o.port) || o.port < 0 || o.port > 65535) {
    throw new ServerConfigError(
      `--http-port ${o.port} is not a TCP port; give an integer from 1 to 65535 (default ${DEFAULT_HTTP_PORT}).`,
    );
  }
  if (o.token !== undefined && o.token.length < MIN_TOKEN_LENGTH) {
    throw new ServerConfigError(
      `--token is ${o.token.length} characters; use at least ${MIN_TOKEN_LENGTH} random characters (e.g. \`openssl rand -hex 16\`).`,
    );
  }
  if (!isLoopbackHost(o.host) && o.token === undefined) {
    throw new ServerConfigError(
      `refusing to listen on ${o.host} without a token: anyone on that network could control the agent. ` +
        `Add --token T (or set FLOORLINE_TOKEN), or leave --host at ${DEFAULT_HOST}.`,
    );
  }
  for (const [name, v] of [
    ['maxPayload', o.maxPayload],
    ['maxBufferedBytes', o.maxBufferedBytes],
    ['traceLength', o.traceLength],
    ['maxClients', o.maxClients],
    ['maxConnections', o.maxConnections],
  ] as const) {
    if (!Number.isInteger(v) || v < 1)
      throw new ServerConfigError(`server option ${name} must be a positive integer, got ${v}`);
  }
  if (!(o.maxFramesPerSecond > 0))
    throw new ServerConfigError(`server option maxFramesPerSecond must be above 0, got ${o.maxFramesPerSecond}`);
  return o;
}
