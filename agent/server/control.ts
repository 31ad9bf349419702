// Carries out one validated client request against the backend and builds the reply.
import type { ClientMessage, ReplyMessage, SpectrumContext, AgentStatus, WireError } from '../../protocol/messages.ts';
import { BackendRefusal, type ServerBackend } from './backend.ts';

export interface ControlDeps {
  backend: ServerBackend;
  /** Context after a change takes effect (the server builds it from the backend). */
  context(): SpectrumContext | null;
  status(): AgentStatus;
}

function errorOf(err: unknown): WireError {
  if (err instanceof BackendRefusal) return { code: err.code, message: err.message };
  const e = err as Error & { code?: string };
  if (e && e.code === 'PATH_OUTSIDE_DATA_FOLDER') return { code: 'path-refused', message: e.message };
  if (err instanceof RangeError) return { code: 'bad-message', message: err.message };
  return { code: 'failed', message: e instanceof Error ? e.message : String(err) };
}

export async function handleRequest(m: ClientMessage, deps: ControlDeps): Promise<ReplyMessage> {
  const { backend } = deps;
  try {
    switch (m.type) {
      case 'capture-baseline': {
        const r = await backend.captureBaseline({ seconds: m.seconds, name: m.name, notes: m.notes });
        return { type: 'reply', id: m.id, request: m.type, ok: true, result: { file: r.file } };
      }
      case 'recording': {
        const recording = await backend.setRecording(m.action === 'start');
        return { type: 'reply', id: m.id, request: m.type, ok: true, result: { recording } };
      }
      case 'set-analysis': {
        backend.setAnalysis({ averaging: m.averaging, segment: m.segment, window: m.window });
        const context = deps.context();
        if (context === null) throw new BackendRefusal('failed', 'no spectrum yet: the stream has not started');
        return { type: 'reply', id: m.id, request: m.type, ok: true, result: { context } };
      }
      case 'acknowledge': {
        const acknowledged = backend.acknowledge({ rule: m.rule, channel: m.channel, band: m.band });
        return { type: 'reply', id: m.id, request: m.type, ok: true, result: { acknowledged } };
      }
      case 'note': {
        if (!backend.history) throw new BackendRefusal('failed', 'this agent keeps no history store; notes need one (start it without --no-history)');
        const stamped = backend.history.note(m.text, m.incident);
        return { type: 'reply', id: m.id, request: m.type, ok: true, result: stamped };
      }
      case 'get-status':
        return { type: 'reply', id: m.id, request: m.type, ok: true, result: { status: deps.status() } };
    }
  } catch (err) {
    return { type: 'reply', id: m.id, request: m.type, ok: false, error: errorOf(err) };
  }
}
