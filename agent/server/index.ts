// The agent's HTTP + WebSocket server: see README.md beside this file.
export { startServer, AGENT_VERSION, type RunningServer } from './server.ts';
export { DEFAULT_HTTP_PORT, DEFAULT_HOST, ServerConfigError, type ServerOptions } from './options.ts';
export { MonitorRefusal } from '../monitor/refusal.ts';
export type {
  ServerBackend,
  BackendStatus,
  BackendSubscriber,
  ServerSnapshot,
  ServerBlock,
  BaselineOverlay,
  AnalysisChange,
} from './backend.ts';
