// The rig config file (--config rig.json): one JSON file with source, per-channel calibration, analysis, bands,
// rules, notifications, retention, data folder and server. The shape is published as a JSON Schema beside this
// module (rig-config.schema.json) and checked with ajv; checks a schema cannot express (a webhook URL that parses,
// an exec program that exists, a band with LO < HI, the rules' own ranges) follow, each naming the JSON path.
import { accessSync, constants, statSync } from 'node:fs';
import { dirname, isAbsolute, resolve } from 'node:path';
import { Ajv, type ErrorObject } from 'ajv';
import schema from './rig-config.schema.json';
import { parseBand } from '../../protocol/bands.ts';
import { parseRules, type RulesConfig } from '../rules/rules.ts';
import { parseWindowName } from '../../dsp/windows.ts';
import { FloorlineError } from '../errors.ts';
import { readSmallTextFileSync } from '../input-file.ts';

/** Largest rig config read (a real one is a few kB). */
const MAX_CONFIG_BYTES = 2 ** 20;

export type NotifyState = 'raised' | 'settled' | 'cleared';

interface SinkFilters {
  states?: NotifyState[];
  rules?: string[];
  /** Notify `raised` only once the alarm has held this long (sample time); a shorter alarm notifies nothing. */
  minDurationSeconds?: number;
  /** After a notification for an incident, further ones of the same state within this many seconds are dropped. */
  quietSeconds?: number;
  /** Delivery attempts before the notification is given up (and an info event says so). */
  maxTries?: number;
}
export interface WebhookSinkConfig extends SinkFilters {
  webhook: string;
  headers?: Record<string, string>;
}
export interface ExecSinkConfig extends SinkFilters {
  exec: string[];
}
export type SinkConfig = WebhookSinkConfig | ExecSinkConfig;

export interface ChannelConfig {
  name: string;
  unit: string;
  voltsPerCount?: number;
  gain?: number;
  inputReferred?: boolean;
  budget?: number;
}

export interface Quota {
  maxBytes?: number;
  maxAgeDays?: number;
}

export interface RigConfig {
  /** The rig's name (reports show it). */
  name?: string;
  source?: { port?: string; baud?: number; format?: 'binary' | 'text'; rate?: number };
  channels?: ChannelConfig[];
  analysis?: {
    segment?: number;
    window?: string;
    overlap?: number;
    detrend?: 'none' | 'mean' | 'linear';
    average?: string;
    snapshotRate?: number;
  };
  bands?: string[];
  rules?: Record<string, unknown>;
  notify?: SinkConfig[];
  retention?: { recordings?: Quota; captures?: Quota; minFreeBytes?: number };
  data?: string;
  server?: { host?: string; port?: number; tokenEnv?: string };
  masks?: Record<string, string>;
}

/** A loaded config: the file as written (relative paths resolved against its folder) and its parsed rules. */
export interface LoadedRigConfig {
  file: string;
  config: RigConfig;
  /** The rules merged over the defaults, when the file has a `rules` key. */
  rules?: RulesConfig;
}

/** A config that does not validate: exit 2, the message names the JSON path and the fix. */
export class ConfigError extends FloorlineError {
  override readonly name = 'ConfigError';
  constructor(message: string) {
    super('RIG_CONFIG', message);
  }
}

export const RIG_CONFIG_SCHEMA = schema;
const validate = new Ajv({ allErrors: true, strict: true }).compile<RigConfig>(schema);

/** "/channels/1/gain" → "channels[1].gain" (the root is "(top level)"). */
export function jsonPath(pointer: string): string {
  const parts = pointer
    .split('/')
    .slice(1)
    .map((p) => p.replace(/~1/g, '/').replace(/~0/g, '~'));
  let out = '';
  for (const p of parts) out += /^\d+$/.test(p) ? `[${p}]` : out === '' ? p : `.${p}`;
  return out || '(top level)';
}

const FIXES: Record<string, string> = {
  exclusiveMinimum: 'give a positive number',
  minimum: 'give a larger number',
  maximum: 'give a smaller number',
  type: 'use that JSON type',
  enum: 'use one of the listed values',
  pattern: 'match the expected form',
  required: 'add it',
  minItems: 'give at least one item',
  minLength: 'give a non-empty string',
  uniqueItems: 'list each value once',
};

function describe(e: ErrorObject): string {
  let path = jsonPath(e.instancePath);
  let message = e.message ?? 'is not valid';
  if (e.keyword === 'additionalProperties') {
    const key = (e.params as { additionalProperty: string }).additionalProperty;
    path = jsonPath(`${e.instancePath}/${key}`);
    message = 'is not a known key';
    return `${path}: ${message}; remove it or check its spelling (see agent/config/rig-config.schema.json)`;
  }
  if (e.keyword === 'enum')
    message += ` ${(e.params as { allowedValues: unknown[] }).allowedValues.map((v) => JSON.stringify(v)).join(', ')}`;
  if (e.keyword === 'pattern' && path.endsWith('webhook'))
    return `${path}: must be an http:// or https:// URL; give the receiver's http(s) address`;
  if (e.keyword === 'pattern' && /bands\[\d+\]$/.test(path)) return `${path}: must be "LO:HI" in Hz, e.g. "20:2000"`;
  return `${path}: ${message}${FIXES[e.keyword] ? `; ${FIXES[e.keyword]}` : ''}`;
}

/** A notify entry fails both branches of the oneOf: report only the branch its own key selects. */
function pickErrors(errors: ErrorObject[], value: unknown): ErrorObject[] {
  const kept = errors.filter((e) => {
    const m = /\/notify\/items\/oneOf\/(\d)\//.exec(e.schemaPath);
    if (!m) return e.keyword !== 'oneOf';
    const item = lookup(value, e.instancePath.split('/').slice(1, 3)) as Record<string, unknown> | undefined;
    const branch = item && 'exec' in item && !('webhook' in item) ? '1' : '0';
    return m[1] === branch;
  });
  return kept.length ? kept : errors;
}

function lookup(value: unknown, parts: string[]): unknown {
  let v = value;
  for (const p of parts) v = v && typeof v === 'object' ? (v as Record<string, unknown>)[p] : undefined;
  return v;
}

function isExecutable(path: string): boolean {
  try {
    accessSync(path, constants.X_OK);
    return statSync(path).isFile();
  } catch {
    return false;
  }
}

/** Checks beyond the schema; returns the first problem as "path: what; fix". */
function semanticProblems(c: RigConfig): string[] {
  const out: string[] = [];
  if (c.analysis?.segment !== undefined && (c.analysis.segment & (c.analysis.segment - 1)) !== 0) {
    out.push(`analysis.segment: ${c.analysis.segment} is not a power of two; give one from 64 to 1048576, e.g. 4096`);
  }
  if (c.analysis?.window !== undefined) {
    try {
      parseWindowName(c.analysis.window);
    } catch (err) {
      out.push(`analysis.window: ${(err as Error).message}`);
    }
  }
  c.bands?.forEach((b, i) => {
    try {
      parseBand(b);
    } catch (err) {
      out.push(`bands[${i}]: ${(err as Error).message}`);
    }
  });
  const names = new Set<string>();
  c.channels?.forEach((ch, i) => {
    if (names.has(ch.name))
      out.push(`channels[${i}].name: "${ch.name}" is used twice; give every channel its own name`);
    names.add(ch.name);
    if (ch.inputReferred && ch.gain === undefined)
      out.push(`channels[${i}].inputReferred: needs a gain to refer to the input; add "gain" or drop "inputReferred"`);
  });
  c.notify?.forEach((s, i) => {
    if ('webhook' in s) {
      let url: URL | undefined;
      try {
        url = new URL(s.webhook);
      } catch {
        out.push(`notify[${i}].webhook: "${s.webhook}" is not a URL; give http://HOST:PORT/PATH or https://…`);
      }
      if (url && url.protocol !== 'http:' && url.protocol !== 'https:')
        out.push(`notify[${i}].webhook: must be an http:// or https:// URL`);
    } else {
      const prog = s.exec[0];
      if (!isAbsolute(prog))
        out.push(
          `notify[${i}].exec[0]: "${prog}" is not an absolute path; give the program's full path (it runs without a shell or PATH search)`,
        );
      else if (!isExecutable(prog))
        out.push(
          `notify[${i}].exec[0]: ${prog} does not exist or is not executable; give the full path of an executable file`,
        );
    }
  });
  for (const [ch, file] of Object.entries(c.masks ?? {})) {
    try {
      statSync(file);
    } catch {
      out.push(`masks.${ch}: ${file} does not exist; give the path of a mask CSV (frequency,limit)`);
    }
  }
  return out;
}

/** Validates a parsed config. `file` (for relative paths and messages) is the config's own path. */
export function checkRigConfig(value: unknown, file: string): LoadedRigConfig {
  const where = `config ${file}`;
  if (!validate(value)) {
    const lines = pickErrors(validate.errors ?? [], value).map(describe);
    throw new ConfigError(`${where}: ${lines.join('\n  ')}`);
  }
  const config = structuredClone(value);
  const base = dirname(resolve(file));
  if (config.data !== undefined) config.data = resolve(base, config.data);
  if (config.masks) for (const k of Object.keys(config.masks)) config.masks[k] = resolve(base, config.masks[k]);
  const problems = semanticProblems(config);
  if (problems.length) throw new ConfigError(`${where}: ${problems.join('\n  ')}`);
  let rules: RulesConfig | undefined;
  if (config.rules !== undefined) {
    try {
      rules = parseRules(config.rules, `${file} "rules"`);
    } catch (err) {
      throw new ConfigError(`${where}: rules: ${(err as Error).message.replace(/^rules [^:]*: /, '')}`);
    }
  }
  return { file: resolve(file), config, rules };
}

/** Reads and validates a config file. */
export function loadRigConfig(file: string): LoadedRigConfig {
  let text: string;
  try {
    text = readSmallTextFileSync(file, MAX_CONFIG_BYTES);
  } catch (err) {
    throw new ConfigError(
      `config ${file}: cannot read it (${(err as NodeJS.ErrnoException).code ?? (err as Error).message}); give the path of a rig config JSON file.`,
    );
  }
  let value: unknown;
  try {
    value = JSON.parse(text);
  } catch (err) {
    throw new ConfigError(`config ${file}: not valid JSON (${(err as Error).message}); fix the syntax.`);
  }
  return checkRigConfig(value, file);
}
