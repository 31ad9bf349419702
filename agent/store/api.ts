// GET /api/trend and /api/incidents: the query commands' JSON, read-only, bounded in rows (points, default 1000,
// at most 10000 per series, merged server-side). Every parameter is checked; bad ones get 400 naming the fix.
import type { ServerResponse } from 'node:http';
import { parseBand } from '../../protocol/bands.ts';
import { openStoreForReading, type StoreDb } from './open-store.ts';
import { EVERY_CHOICES, queryTrend, type Every } from './trend-query.ts';
import { queryIncidents } from './incident-query.ts';
import { parseTimeBound, type TimeBound } from './time-bound.ts';
import { FloorlineError } from '../errors.ts';

export const DEFAULT_POINTS = 1000;
export const MAX_POINTS = 10_000;

export class BadParameter extends Error {}

export function param(url: URL, name: string, max = 200): string | undefined {
  const v = url.searchParams.get(name);
  if (v === null || v === '') return undefined;
  if (v.length > max) throw new BadParameter(`'${name}' is longer than ${max} characters`);
  return v;
}

export function time(url: URL, name: string): TimeBound | undefined {
  const v = param(url, name);
  if (v === undefined) return undefined;
  try {
    return parseTimeBound(v);
  } catch (err) {
    throw new BadParameter(`'${name}': ${(err as Error).message}`);
  }
}

/** A reader connection per store path, opened on first use (the writer checked the file when it opened it). */
const readers = new Map<string, StoreDb>();
export function reader(path: string): StoreDb {
  let db = readers.get(path);
  if (!db || !db.open) {
    db = openStoreForReading(path, false);
    readers.set(path, db);
  }
  return db;
}

export function closeHistoryReaders(): void {
  for (const db of readers.values()) if (db.open) db.close();
  readers.clear();
}

export function send(res: ServerResponse, status: number, body: unknown, head: boolean): void {
  res.writeHead(status, { 'content-type': 'application/json; charset=utf-8', 'cache-control': 'no-store' });
  res.end(head ? undefined : JSON.stringify(body));
}

/** 404 for a history request to an agent that keeps no store. */
export function sendNoHistory(res: ServerResponse, head: boolean): void {
  send(
    res,
    404,
    {
      error: {
        code: 'no-history',
        message: 'this agent keeps no history store (started with --no-history, or no data folder)',
      },
    },
    head,
  );
}

/** Answers /api/trend and /api/incidents; returns false for other paths. */
export function handleHistoryApi(
  path: string,
  url: URL,
  res: ServerResponse,
  head: boolean,
  storePath: string | undefined,
): boolean {
  if (path !== '/api/trend' && path !== '/api/incidents') return false;
  if (!storePath) {
    sendNoHistory(res, head);
    return true;
  }
  try {
    const from = time(url, 'from');
    const to = time(url, 'to');
    if (path === '/api/incidents') {
      send(res, 200, { incidents: queryIncidents(reader(storePath), from, to) }, head);
      return true;
    }
    const every = (param(url, 'every') ?? '1m') as Every;
    if (!EVERY_CHOICES.includes(every)) throw new BadParameter(`'every' must be one of ${EVERY_CHOICES.join(', ')}`);
    const pointsText = param(url, 'points');
    const points = pointsText === undefined ? DEFAULT_POINTS : Number(pointsText);
    if (!Number.isInteger(points) || points < 1 || points > MAX_POINTS)
      throw new BadParameter(`'points' must be an integer from 1 to ${MAX_POINTS}`);
    const bandText = param(url, 'band');
    let band;
    if (bandText !== undefined) {
      try {
        band = parseBand(bandText);
      } catch (err) {
        throw new BadParameter((err as Error).message.replace('--band', "'band'"));
      }
    }
    send(
      res,
      200,
      queryTrend(reader(storePath), { channel: param(url, 'channel', 64), band, from, to, every, points }),
      head,
    );
  } catch (err) {
    const e = err as Error;
    if (err instanceof BadParameter || err instanceof FloorlineError)
      send(res, 400, { error: { code: 'bad-query', message: e.message.replace(/^floorline trend: /, '') } }, head);
    else send(res, 500, { error: { code: 'failed', message: e.message } }, head);
  }
  return true;
}
