// Flags of the commands that serve the dashboard (run, replay, demo). The HTTP port flag is --http-port because
// `run --port` names the serial device.
import { defineFlags, type FlagValues } from '../cli/args.ts';
import { readFileSync } from 'node:fs';
import { registerSecret } from '../service/log-lines.ts';
import { connectionBudget, DEFAULT_HOST, DEFAULT_HTTP_PORT, ServerConfigError, type ServerOptions } from './options.ts';
import { openFileLimit } from './rate-limit.ts';

export const SERVER_FLAGS = defineFlags([
  {
    name: 'http-port',
    kind: 'number',
    value: 'N',
    integer: true,
    min: 0,
    max: 65535,
    default: DEFAULT_HTTP_PORT,
    help: 'dashboard port (0 picks a free one)',
  },
  {
    name: 'host',
    kind: 'string',
    value: 'ADDR',
    default: DEFAULT_HOST,
    help: 'address to listen on; anything but loopback needs --token',
  },
  {
    name: 'token',
    kind: 'string',
    value: 'T',
    help: 'access token (≥ 16 characters) required on every request; visible in `ps`: prefer FLOORLINE_TOKEN or --token-file',
  },
  { name: 'token-file', kind: 'string', value: 'FILE', help: 'read the access token from this file (first line)' },
  {
    name: 'show-token',
    kind: 'boolean',
    help: 'print the dashboard URL with its ?token=… (off: the token stays out of the terminal)',
  },
]);

type ServerFlags = FlagValues<typeof SERVER_FLAGS>;

function tokenFrom(f: ServerFlags): string | undefined {
  const file = f['token-file'];
  if (file !== undefined) {
    let text: string;
    try {
      text = readFileSync(file, 'utf8');
    } catch (err) {
      throw new ServerConfigError(
        `--token-file ${file}: cannot read it (${(err as NodeJS.ErrnoException).code ?? (err as Error).message}); give a readable file holding the token.`,
      );
    }
    const token = text.split('\n')[0].trim();
    if (token === '')
      throw new ServerConfigError(`--token-file ${file}: the file is empty; put the token on its first line.`);
    return token;
  }
  return f.token ?? process.env.FLOORLINE_TOKEN;
}

export function serverOptionsFromArgs(
  f: ServerFlags,
  assetsDir: string,
): Partial<ServerOptions> & { assetsDir: string } {
  const token = tokenFrom(f);
  registerSecret(token);
  return {
    assetsDir,
    showToken: f['show-token'],
    maxConnections: connectionBudget(openFileLimit(() => readFileSync('/proc/self/limits', 'utf8'))),
    port: f['http-port'],
    host: f.host,
    ...(token ? { token } : {}),
  };
}

/** dist/dashboard beside the bundled CLI (dist/floorline.mjs), where `npm run build` puts it. */
export function defaultAssetsDir(): string {
  return new URL('./dashboard/', import.meta.url).pathname;
}
