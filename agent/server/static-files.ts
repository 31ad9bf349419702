// Serves the built dashboard (dist/dashboard) and, read-only, files inside the data folder (captured recordings,
// baselines, the event log). Every name is resolved inside its root; anything else is refused.
import { createReadStream, statSync } from 'node:fs';
import { extname } from 'node:path';
import type { ServerResponse } from 'node:http';
import { resolveInside } from '../config/safe-path.ts';

const TYPES: Record<string, string> = {
  '.html': 'text/html; charset=utf-8',
  '.js': 'text/javascript; charset=utf-8',
  '.css': 'text/css; charset=utf-8',
  '.map': 'application/json; charset=utf-8',
  '.json': 'application/json; charset=utf-8',
  '.jsonl': 'application/jsonl; charset=utf-8',
  '.wav': 'audio/wav',
  '.svg': 'image/svg+xml',
  '.png': 'image/png',
};

export function sendError(res: ServerResponse, status: number, code: string, message: string): void {
  const body = JSON.stringify({ error: { code, message } });
  res.writeHead(status, {
    'content-type': 'application/json; charset=utf-8',
    'content-length': Buffer.byteLength(body),
    'cache-control': 'no-store',
  });
  res.end(body);
}

/** Streams `name` from inside `root`; answers 403 for names that leave it and 404 for missing files. */
export function sendFileInside(
  res: ServerResponse,
  root: string,
  name: string,
  head: boolean,
  download: boolean,
): void {
  let path: string;
  try {
    path = resolveInside(root, name, 'file');
  } catch (err) {
    sendError(res, 403, 'path-refused', (err as Error).message);
    return;
  }
  let size: number;
  try {
    const st = statSync(path);
    if (!st.isFile()) throw new Error('not a file');
    size = st.size;
  } catch {
    sendError(res, 404, 'not-found', `no file '${name}'`);
    return;
  }
  const headers: Record<string, string | number> = {
    'content-type': TYPES[extname(path).toLowerCase()] ?? 'application/octet-stream',
    'content-length': size,
    'cache-control': 'no-store',
  };
  if (download)
    headers['content-disposition'] = `attachment; filename="${name
      .split('/')
      .pop()!
      .replace(/[^A-Za-z0-9._-]/g, '_')}"`;
  res.writeHead(200, headers);
  if (head) {
    res.end();
    return;
  }
  createReadStream(path)
    .on('error', () => res.destroy())
    .pipe(res);
}
