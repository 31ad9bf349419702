// Flags override the rig config: the config fills every flag the command line left at its default. So the
// commands read their settings the one way they always did, from the parsed flags.
import { defineFlag, type FlagSpec, type ParsedArgs } from '../cli/args.ts';
import { defaultRules } from '../rules/rules.ts';
import { DEFAULT_ANALYSIS, DEFAULT_SNAPSHOT_RATE } from '../pipeline/analyser.ts';
import { DEFAULT_DATA_FOLDER } from './data-folder.ts';
import { DEFAULT_HOST, DEFAULT_HTTP_PORT } from '../server/options.ts';
import { loadRigConfig, type LoadedRigConfig, type RigConfig, type SinkConfig } from './rig-config.ts';

export const CONFIG_FLAG = defineFlag({
  name: 'config',
  kind: 'string',
  value: 'FILE',
  help: 'rig config JSON (source, channel calibration, analysis, bands, rules, notify, retention, data, server); flags override it',
});

/** Flag name → its value in the config (undefined when the config does not set it). */
function configFlagValues(c: RigConfig): Record<string, string | number | string[] | undefined> {
  const token = c.server?.tokenEnv ? process.env[c.server.tokenEnv] : undefined;
  return {
    port: c.source?.port,
    baud: c.source?.baud,
    format: c.source?.format,
    rate: c.source?.rate,
    segment: c.analysis?.segment,
    window: c.analysis?.window,
    overlap: c.analysis?.overlap,
    detrend: c.analysis?.detrend,
    average: c.analysis?.average,
    'snapshot-rate': c.analysis?.snapshotRate,
    band: c.bands,
    data: c.data,
    host: c.server?.host,
    'http-port': c.server?.port,
    token: token || undefined,
  };
}

/** Copies config values into the flags the command has and the user did not write. */
export function applyRigConfig(args: ParsedArgs, flags: readonly FlagSpec[], loaded: LoadedRigConfig): void {
  const values = configFlagValues(loaded.config);
  const known = new Set(flags.map((f) => f.name));
  for (const [name, value] of Object.entries(values)) {
    if (value === undefined || !known.has(name) || args.given?.has(name)) continue;
    args.flags[name] = Array.isArray(value) ? [...value] : value;
  }
}

/** Loads --config when given and applies it under the flags; undefined without --config. */
export function readConfigFlag(
  args: ParsedArgs<readonly [typeof CONFIG_FLAG]>,
  flags: readonly FlagSpec[],
): LoadedRigConfig | undefined {
  const file = args.flags.config;
  if (!file) return undefined;
  const loaded = loadRigConfig(file);
  applyRigConfig(args, flags, loaded);
  return loaded;
}

/** Header values that look like credentials are never printed or logged. */
export function redactSink(s: SinkConfig): SinkConfig {
  if (!('webhook' in s) || !s.headers) return s;
  const headers: Record<string, string> = {};
  for (const k of Object.keys(s.headers)) headers[k] = '(hidden)';
  return { ...s, headers };
}

/** What a run with this config (and no overriding flags) would use: the file with every default filled in. */
export function effectiveSettings(loaded: LoadedRigConfig): Record<string, unknown> {
  const c = loaded.config;
  return {
    file: loaded.file,
    source: {
      port: c.source?.port ?? null,
      baud: c.source?.baud ?? 921600,
      format: c.source?.format ?? 'binary',
      rate: c.source?.rate ?? null,
    },
    channels: (c.channels ?? []).map((ch) => ({
      name: ch.name,
      unit: ch.unit,
      voltsPerCount: ch.voltsPerCount ?? null,
      gain: ch.gain ?? null,
      inputReferred: ch.inputReferred === true,
      budget: ch.budget ?? null,
    })),
    analysis: {
      segment: c.analysis?.segment ?? DEFAULT_ANALYSIS.segment,
      window: c.analysis?.window ?? DEFAULT_ANALYSIS.window,
      overlap: c.analysis?.overlap ?? DEFAULT_ANALYSIS.overlap,
      detrend: c.analysis?.detrend ?? DEFAULT_ANALYSIS.detrend,
      average: c.analysis?.average ?? 'exp:10',
      snapshotRate: c.analysis?.snapshotRate ?? DEFAULT_SNAPSHOT_RATE,
    },
    bands: c.bands ?? [],
    rules: loaded.rules ?? defaultRules(),
    notify: (c.notify ?? []).map(redactSink),
    retention: {
      recordings: c.retention?.recordings ?? {},
      captures: c.retention?.captures ?? {},
      minFreeBytes: c.retention?.minFreeBytes ?? 0,
    },
    data: c.data ?? DEFAULT_DATA_FOLDER,
    server: {
      host: c.server?.host ?? DEFAULT_HOST,
      port: c.server?.port ?? DEFAULT_HTTP_PORT,
      token: c.server?.tokenEnv
        ? `from $${c.server.tokenEnv}${process.env[c.server.tokenEnv] ? '' : ' (not set)'}`
        : null,
    },
    masks: c.masks ?? {},
  };
}
