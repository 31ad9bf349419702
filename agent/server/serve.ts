// The dashboard server as a part of a running monitor (run, replay and demo attach it unless --no-server).
import { existsSync } from 'node:fs';
import { join } from 'node:path';
import type { Monitor } from '../monitor/monitor.ts';
import type { MonitorPart } from '../monitor/parts.ts';
import { monitorBackend } from './monitor-backend.ts';
import { startServer } from './server.ts';
import { defaultAssetsDir } from './cli-flags.ts';
import { ServerConfigError, type ServerOptions } from './options.ts';

/** Makes the part: checks the dashboard is built, starts the server over the monitor's read model, prints the URL. */
export function serveDashboard(
  options: Partial<ServerOptions>,
  print: (line: string) => void = (l) => process.stdout.write(l + '\n'),
) {
  return async (m: Monitor): Promise<MonitorPart> => {
    const assetsDir = options.assetsDir ?? defaultAssetsDir();
    if (!existsSync(join(assetsDir, 'index.html'))) {
      throw new ServerConfigError(
        `the dashboard is not built (${assetsDir}index.html is missing); run \`npm run build\`, or pass --no-server.`,
      );
    }
    const { backend, part } = monitorBackend(m);
    const server = await startServer(backend, { ...options, assetsDir });
    // The token stays out of the terminal (and so out of logs and screen shares) unless asked for.
    const hint =
      server.urlWithToken !== server.url ? '  (token required: add ?token=… once, or pass --show-token)' : '';
    print(`dashboard  ${options.showToken ? server.urlWithToken : server.url + hint}`);
    return { ...part, close: () => server.close() };
  };
}
