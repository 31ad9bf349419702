// Starts the server on a free loopback port against a FakeBackend in a fresh temporary data folder.
import { mkdtempSync, mkdirSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { startServer, type RunningServer, type ServerOptions } from '../../../agent/server/index.ts';
import { FakeBackend, type FakeOptions } from './fake-backend.ts';

export interface Started {
  server: RunningServer;
  backend: FakeBackend;
  base: string;
  ws: string;
  dir: string;
}

export async function startWithFake(
  options: Partial<ServerOptions> & { warn?: (line: string) => void } = {},
  fake: Partial<FakeOptions> = {},
): Promise<Started> {
  const dir = mkdtempSync(join(tmpdir(), 'floorline-server-'));
  const assetsDir = join(dir, 'assets');
  mkdirSync(assetsDir);
  writeFileSync(join(assetsDir, 'index.html'), '<!doctype html><title>test page</title>');
  writeFileSync(join(assetsDir, 'app.js'), 'console.log(1)');
  const backend = new FakeBackend({ dataRoot: join(dir, 'data'), ...fake });
  const server = await startServer(backend, { port: 0, heartbeatMs: 60_000, ...options, assetsDir });
  const host = server.host.includes(':') ? `[${server.host}]` : server.host;
  return { server, backend, dir, base: `http://${host}:${server.port}`, ws: `ws://${host}:${server.port}/ws` };
}
