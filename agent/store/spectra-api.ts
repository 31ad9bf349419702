// GET /api/spectra and /api/spectrum: kept spectra from the history store, read-only, behind the same token and
// origin checks as /api/trend (the server checks access before any handler runs). Bounded: at most MAX_ROWS rows.
import type { ServerResponse } from 'node:http';
import { BadParameter, param, reader, send, sendNoHistory, time } from './api.ts';
import { nearestSpectrum, querySpectra, SpectraQueryError } from './spectra-query.ts';
import { FloorlineError } from '../errors.ts';

export const DEFAULT_ROWS = 240;
export const MAX_ROWS = 2000;

/** Answers /api/spectra and /api/spectrum; returns false for other paths. */
export function handleSpectraApi(
  path: string,
  url: URL,
  res: ServerResponse,
  head: boolean,
  storePath: string | undefined,
): boolean {
  if (path !== '/api/spectra' && path !== '/api/spectrum') return false;
  if (!storePath) {
    sendNoHistory(res, head);
    return true;
  }
  try {
    const channel = param(url, 'channel', 64);
    if (path === '/api/spectrum') {
      const at = time(url, 'at');
      if (!at) throw new BadParameter("'at' is required: ISO-8601 wall time or t=SECONDS of sample time");
      send(res, 200, nearestSpectrum(reader(storePath), at, channel), head);
      return true;
    }
    const rowsText = param(url, 'rows');
    const rows = rowsText === undefined ? DEFAULT_ROWS : Number(rowsText);
    if (!Number.isInteger(rows) || rows < 1 || rows > MAX_ROWS)
      throw new BadParameter(`'rows' must be an integer from 1 to ${MAX_ROWS}`);
    send(
      res,
      200,
      querySpectra(reader(storePath), { channel, from: time(url, 'from'), to: time(url, 'to'), rows }),
      head,
    );
  } catch (err) {
    const e = err as Error;
    if (err instanceof SpectraQueryError && err.missing)
      send(res, 404, { error: { code: 'no-spectra', message: e.message } }, head);
    else if (err instanceof BadParameter || err instanceof FloorlineError)
      send(res, 400, { error: { code: 'bad-query', message: e.message } }, head);
    else send(res, 500, { error: { code: 'failed', message: e.message } }, head);
  }
  return true;
}
