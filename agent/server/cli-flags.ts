// Flags of the commands that serve the dashboard (run, replay, demo). The HTTP port flag is --http-port because
// `run --port` names the serial device.
import type { FlagSpec, ParsedArgs } from '../cli/args.ts';
import { registerSecret } from '../service/log-lines.ts';
import { DEFAULT_HOST, DEFAULT_HTTP_PORT, type ServerOptions } from './options.ts';

export const SERVER_FLAGS: FlagSpec[] = [
  { name: 'http-port', kind: 'number', value: 'N', integer: true, min: 0, max: 65535, default: DEFAULT_HTTP_PORT, help: 'dashboard port (0 picks a free one)' },
  { name: 'host', kind: 'string', value: 'ADDR', default: DEFAULT_HOST, help: 'address to listen on; anything but loopback needs --token' },
  { name: 'token', kind: 'string', value: 'T', help: 'access token (≥ 16 characters) required on every request; or set FLOORLINE_TOKEN' },
];

export function serverOptionsFromArgs(args: ParsedArgs, assetsDir: string): Partial<ServerOptions> & { assetsDir: string } {
  const f = args.flags;
  const token = (f.token as string | undefined) ?? process.env.FLOORLINE_TOKEN;
  registerSecret(token);
  return {
    assetsDir,
    port: f['http-port'] as number,
    host: f.host as string,
    ...(token ? { token } : {}),
  };
}

/** dist/dashboard beside the bundled CLI (dist/floorline.mjs), where `npm run build` puts it. */
export function defaultAssetsDir(): string {
  return new URL('./dashboard/', import.meta.url).pathname;
}
