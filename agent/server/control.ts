// Carries out one validated client request against the backend and builds the reply.
import type { ClientMessage, ReplyMessage, SpectrumContext, AgentStatus, WireError } from '../../protocol/messages.ts';
import type { ServerBackend } from './backend.ts';
import { MonitorRefusal } from '../monitor/refusal.ts';
import { FloorlineError } from '../errors.ts';

export interface ControlDeps {
  backend: ServerBackend;
  /** Context after a change takes effect (the server builds it from the backend). */
  context(): SpectrumContext | null;
  /** The context once a settings change has reached the spectra (so a set-analysis reply carries the new one). */
  contextAfterChange?(): Promise<SpectrumContext | null>;
  status(): AgentStatus;
}

function errorOf(err: unknown): WireError {
  if (err instanceof MonitorRefusal) return { code: err.code, message: err.message };
  if (err instanceof FloorlineError && err.code === 'PATH_OUTSIDE_DATA_FOLDER')
    return { code: 'path-refused', message: err.message };
  const e = err as Error;
  if (err instanceof RangeError) return { code: 'bad-message', message: err.message };
  return { code: 'failed', message: e instanceof Error ? e.message : String(err) };
}

/** A client sees files relative to the data folder: where the agent keeps its data is not its business. */
function relativeToFolder(e: WireError, root: string): WireError {
  const base = root.replace(/\/+$/, '');
  if (!base) return e;
  const message = e.message
    .split(base + '/')
    .join('')
    .split(base)
    .join('the data folder');
  return message === e.message ? e : { ...e, message };
}

export async function handleRequest(m: ClientMessage, deps: ControlDeps): Promise<ReplyMessage> {
  const { backend } = deps;
  try {
    switch (m.type) {
      case 'capture-baseline': {
        const r = await backend.captureBaseline({
          seconds: m.seconds,
          name: m.name,
          notes: m.notes,
          replace: m.replace,
        });
        return { type: 'reply', id: m.id, request: m.type, ok: true, result: { file: r.file } };
      }
      case 'recording': {
        const recording = await backend.setRecording(m.action === 'start');
        return { type: 'reply', id: m.id, request: m.type, ok: true, result: { recording } };
      }
      case 'set-analysis': {
        const before = deps.context();
        const changes =
          (m.segment !== undefined && m.segment !== before?.settings.segment) ||
          (m.window !== undefined && m.window !== before?.settings.window) ||
          (m.averaging !== undefined && JSON.stringify(m.averaging) !== JSON.stringify(before?.averaging));
        backend.setAnalysis({ averaging: m.averaging, segment: m.segment, window: m.window });
        const context = changes && deps.contextAfterChange ? await deps.contextAfterChange() : deps.context();
        if (context === null) throw new MonitorRefusal('failed', 'no spectrum yet: the stream has not started');
        return { type: 'reply', id: m.id, request: m.type, ok: true, result: { context } };
      }
      case 'acknowledge': {
        const acknowledged = backend.acknowledge(m.alarm);
        return { type: 'reply', id: m.id, request: m.type, ok: true, result: { acknowledged } };
      }
      case 'shelve': {
        const r = backend.shelve(m.alarm, m.seconds);
        return { type: 'reply', id: m.id, request: m.type, ok: true, result: r };
      }
      case 'note': {
        if (!backend.history)
          throw new MonitorRefusal(
            'failed',
            'this agent keeps no history store; notes need one (start it without --no-history)',
          );
        const stamped = backend.history.note(m.text, m.incident);
        return { type: 'reply', id: m.id, request: m.type, ok: true, result: stamped };
      }
      case 'restore-baseline': {
        if (!backend.restoreBaseline) throw new MonitorRefusal('unsupported', 'this agent cannot restore a baseline');
        return { type: 'reply', id: m.id, request: m.type, ok: true, result: backend.restoreBaseline() };
      }
      case 'get-status':
        return { type: 'reply', id: m.id, request: m.type, ok: true, result: { status: deps.status() } };
    }
  } catch (err) {
    return {
      type: 'reply',
      id: m.id,
      request: m.type,
      ok: false,
      error: relativeToFolder(errorOf(err), backend.dataRoot),
    };
  }
}
