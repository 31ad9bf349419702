// Validation of every client → agent message. The server trusts nothing it did not check here:
// unknown fields are refused too, so a typo never silently does nothing.
import { MAX_SEGMENT, MIN_SEGMENT, type AveragingSpec } from '../../protocol/settings.ts';
import {
  MAX_CLIENT_MESSAGE_BYTES,
  type ClientMessage,
  type ClientMessageType,
  type WireError,
} from '../../protocol/messages.ts';

export type ParseResult =
  | { ok: true; message: ClientMessage }
  | {
      ok: false;
      error: WireError;
      /** The request id and type, when they could be read, so the error can be a reply. */ id?: number;
      request?: ClientMessageType;
    };

const TYPES: Record<ClientMessageType, readonly string[]> = {
  'capture-baseline': ['type', 'id', 'seconds', 'name', 'notes', 'replace'],
  recording: ['type', 'id', 'action'],
  'set-analysis': ['type', 'id', 'averaging', 'segment', 'window'],
  acknowledge: ['type', 'id', 'alarm'],
  shelve: ['type', 'id', 'alarm', 'seconds'],
  note: ['type', 'id', 'text', 'incident'],
  'restore-baseline': ['type', 'id'],
  'get-status': ['type', 'id'],
};

/** Limits on requested analysis settings (the backend may refuse more, e.g. a window it does not know). */
export const AVERAGE_COUNT_MAX = 100_000;
export const TAU_SECONDS_MIN = 0.01;
export const TAU_SECONDS_MAX = 86_400;
export const BASELINE_SECONDS_MAX = 3600;
export const SHELVE_SECONDS_MAX = 7 * 86_400;

/** An alarm id as protocol/ids.ts makes them ("mains/ch0/h1"), or an incident id as events carry them
 *  ("mains-ch0-s167999"): a rule name first, then printable characters only, no control characters. */
const ALARM_ID = /^[a-z-]+(\/|-)[\x20-\x7e\u00a0-\uffff]{1,200}$/;
export const NOTE_TEXT_MAX = 2000;

/** A baseline file name the client may choose: one plain name, no folders, no leading dot. */
export const SAFE_FILE_NAME = /^[A-Za-z0-9][A-Za-z0-9._-]{0,79}$/;

class Invalid extends Error {
  constructor(
    readonly code: WireError['code'],
    message: string,
  ) {
    super(message);
  }
}

function isRecord(v: unknown): v is Record<string, unknown> {
  return typeof v === 'object' && v !== null && !Array.isArray(v);
}

function num(o: Record<string, unknown>, key: string, min: number, max: number, integer: boolean): number {
  const v = o[key];
  if (typeof v !== 'number' || !Number.isFinite(v) || (integer && !Number.isInteger(v)) || v < min || v > max) {
    throw new Invalid(
      'bad-message',
      `'${key}' must be ${integer ? 'an integer' : 'a number'} from ${min} to ${max}, got ${JSON.stringify(v)}`,
    );
  }
  return v;
}

function str(o: Record<string, unknown>, key: string, maxLength: number): string {
  const v = o[key];
  if (typeof v !== 'string' || v.length === 0 || v.length > maxLength) {
    throw new Invalid('bad-message', `'${key}' must be a non-empty string of at most ${maxLength} characters`);
  }
  return v;
}

function averaging(v: unknown): AveragingSpec {
  if (!isRecord(v) || typeof v.mode !== 'string')
    throw new Invalid('bad-message', `'averaging' must be an object with a 'mode'`);
  const only = (keys: string[]): void => {
    for (const k of Object.keys(v))
      if (!keys.includes(k)) throw new Invalid('bad-message', `'averaging' has an unknown field '${k}'`);
  };
  switch (v.mode) {
    case 'mean':
    case 'max':
      only(['mode']);
      return { mode: v.mode };
    case 'rolling':
    case 'median':
      only(['mode', 'count']);
      return { mode: v.mode, count: num(v, 'count', 1, AVERAGE_COUNT_MAX, true) };
    case 'exponential':
      only(['mode', 'tauSeconds']);
      return { mode: 'exponential', tauSeconds: num(v, 'tauSeconds', TAU_SECONDS_MIN, TAU_SECONDS_MAX, false) };
    default:
      throw new Invalid(
        'bad-message',
        `averaging mode '${String(v.mode)}' is not one of mean, rolling, exponential, max, median`,
      );
  }
}

function alarm(o: Record<string, unknown>): string {
  const a = str(o, 'alarm', 256);
  if (!ALARM_ID.test(a))
    throw new Invalid(
      'bad-message',
      `'alarm' '${a.slice(0, 40)}' is not an alarm or incident id (status.alarms[].id, e.g. "mains/ch0/h1", or an event's incident)`,
    );
  return a;
}

function build(o: Record<string, unknown>, type: ClientMessageType, id: number): ClientMessage {
  for (const k of Object.keys(o))
    if (!TYPES[type].includes(k)) throw new Invalid('bad-message', `'${type}' has an unknown field '${k}'`);
  switch (type) {
    case 'capture-baseline': {
      const m: ClientMessage = { type, id, seconds: num(o, 'seconds', 0.1, BASELINE_SECONDS_MAX, false) };
      if (o.name !== undefined) {
        const name = str(o, 'name', 80);
        if (!SAFE_FILE_NAME.test(name) || name.includes('..')) {
          throw new Invalid(
            'path-refused',
            `baseline name '${name}' must be a plain file name (letters, digits, . _ -), saved inside the data folder's baselines/`,
          );
        }
        m.name = name;
      }
      if (o.notes !== undefined) m.notes = str(o, 'notes', 1000);
      if (o.replace !== undefined) {
        if (typeof o.replace !== 'boolean') throw new Invalid('bad-message', `'replace' must be true or false`);
        m.replace = o.replace;
      }
      return m;
    }
    case 'recording':
      if (o.action !== 'start' && o.action !== 'stop')
        throw new Invalid('bad-message', `'action' must be 'start' or 'stop'`);
      return { type, id, action: o.action };
    case 'set-analysis': {
      const m: ClientMessage = { type, id };
      if (o.averaging !== undefined) m.averaging = averaging(o.averaging);
      if (o.segment !== undefined) {
        const s = num(o, 'segment', MIN_SEGMENT, MAX_SEGMENT, true);
        if ((s & (s - 1)) !== 0) throw new Invalid('bad-message', `'segment' must be a power of two, got ${s}`);
        m.segment = s;
      }
      if (o.window !== undefined) {
        const w = str(o, 'window', 32);
        if (!/^[a-z0-9][a-z0-9:.-]*$/.test(w)) throw new Invalid('bad-message', `'window' '${w}' is not a window name`);
        m.window = w;
      }
      if (m.averaging === undefined && m.segment === undefined && m.window === undefined) {
        throw new Invalid('bad-message', `'set-analysis' needs at least one of averaging, segment, window`);
      }
      return m;
    }
    case 'acknowledge':
      return { type, id, alarm: alarm(o) };
    case 'shelve':
      return { type, id, alarm: alarm(o), seconds: num(o, 'seconds', 1, SHELVE_SECONDS_MAX, false) };
    case 'note': {
      const text = str(o, 'text', NOTE_TEXT_MAX);
      // eslint-disable-next-line no-control-regex
      if (text.trim() === '' || /[\u0000-\u0008\u000b-\u001f\u007f]/.test(text)) {
        throw new Invalid('bad-message', `'text' must be plain text, not empty (tabs and line breaks are fine)`);
      }
      const m: ClientMessage = { type, id, text };
      if (o.incident !== undefined) {
        const incident = str(o, 'incident', 200);
        if (!/^[A-Za-z0-9._:-]+$/.test(incident)) throw new Invalid('bad-message', `'incident' is not an incident id`);
        m.incident = incident;
      }
      return m;
    }
    case 'get-status':
    case 'restore-baseline':
      return { type, id };
  }
}

/** Parses and validates one text message from a client. Never throws. */
export function parseClientMessage(text: string): ParseResult {
  // Length in UTF-16 units ≤ bytes for UTF-8, so this is a cheap first bound; the server's maxPayload is the hard one.
  if (text.length > MAX_CLIENT_MESSAGE_BYTES) {
    return {
      ok: false,
      error: {
        code: 'bad-message',
        message: `message of ${text.length} characters exceeds ${MAX_CLIENT_MESSAGE_BYTES}`,
      },
    };
  }
  let raw: unknown;
  try {
    raw = JSON.parse(text);
  } catch (err) {
    return { ok: false, error: { code: 'bad-json', message: `not JSON: ${(err as Error).message}` } };
  }
  if (!isRecord(raw))
    return { ok: false, error: { code: 'bad-message', message: 'a message must be a JSON object with a "type"' } };
  const type = raw.type;
  if (typeof type !== 'string' || !Object.hasOwn(TYPES, type)) {
    return {
      ok: false,
      error: {
        code: 'unknown-type',
        message: `unknown message type ${JSON.stringify(type)}; known: ${Object.keys(TYPES).join(', ')}`,
      },
    };
  }
  const request = type as ClientMessageType;
  const id = raw.id;
  if (typeof id !== 'number' || !Number.isSafeInteger(id) || id < 0) {
    return { ok: false, request, error: { code: 'bad-message', message: `'id' must be a non-negative integer` } };
  }
  try {
    return { ok: true, message: build(raw, request, id) };
  } catch (err) {
    if (err instanceof Invalid) return { ok: false, id, request, error: { code: err.code, message: err.message } };
    throw err;
  }
}
