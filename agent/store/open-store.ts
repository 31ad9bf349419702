// Opening a history store: the file is checked before use (SQLite header, our application_id, integrity check,
// schema version) and migrated forward. A corrupt or foreign file is never written over: a writer moves it aside
// (NAME.corrupt-STAMP) and starts a fresh store, a reader refuses it; both say so plainly.
import Database from 'better-sqlite3';
import { closeSync, existsSync, openSync, readSync, renameSync, statSync } from 'node:fs';
import { APPLICATION_ID, MIGRATIONS, SCHEMA_VERSION } from './schema.ts';
import { FloorlineError } from '../errors.ts';

export type StoreDb = Database.Database;

export class StoreFileError extends FloorlineError {
  override readonly name = 'StoreFileError';
  constructor(message: string) {
    super('STORE_FILE', message);
  }
}

const SQLITE_MAGIC = 'SQLite format 3\u0000';

/** Why the file cannot be our store, or undefined when it can (an empty or missing file can). */
function problemWithFile(path: string): string | undefined {
  if (!existsSync(path) || statSync(path).size === 0) return undefined;
  const fd = openSync(path, 'r');
  const head = Buffer.alloc(16);
  try {
    readSync(fd, head, 0, 16, 0);
  } finally {
    closeSync(fd);
  }
  if (head.toString('latin1') !== SQLITE_MAGIC) return 'it is not an SQLite database (its header is wrong)';
  return undefined;
}

/** Why an open database is not a usable store (foreign, corrupt, newer), or undefined. */
function problemWithDb(db: StoreDb): { reason: string; movable: boolean } | undefined {
  let appId: number;
  let version: number;
  let tables: number;
  try {
    appId = db.pragma('application_id', { simple: true }) as number;
    version = db.pragma('user_version', { simple: true }) as number;
    tables = (db.prepare("SELECT count(*) AS n FROM sqlite_schema WHERE type = 'table'").get() as { n: number }).n;
  } catch (err) {
    return { reason: `it cannot be read as a database (${(err as Error).message})`, movable: true };
  }
  if (appId !== APPLICATION_ID && !(appId === 0 && version === 0 && tables === 0)) {
    return { reason: `it is an SQLite file of another program (application_id ${appId})`, movable: true };
  }
  try {
    const rows = db.pragma('integrity_check') as { integrity_check: string }[];
    if (rows.length !== 1 || rows[0].integrity_check !== 'ok') {
      return {
        reason: `its integrity check failed (${rows
          .slice(0, 3)
          .map((r) => r.integrity_check)
          .join('; ')})`,
        movable: true,
      };
    }
  } catch (err) {
    return { reason: `its integrity check failed (${(err as Error).message})`, movable: true };
  }
  if (version > SCHEMA_VERSION) {
    return {
      reason: `it was written by a newer floorline (schema ${version}, this one knows ${SCHEMA_VERSION}); upgrade floorline`,
      movable: false,
    };
  }
  return undefined;
}

function applyPragmas(db: StoreDb, readonly: boolean): void {
  db.pragma('busy_timeout = 5000');
  if (readonly) return;
  // WAL with synchronous=NORMAL: a committed transaction survives the process being killed (kill -9); after a
  // power cut or OS crash the last transactions may be lost, never the file's consistency.
  db.pragma('journal_mode = WAL');
  db.pragma('synchronous = NORMAL');
}

function migrate(db: StoreDb): void {
  let version = db.pragma('user_version', { simple: true }) as number;
  while (version < SCHEMA_VERSION) {
    const step = MIGRATIONS[version];
    db.transaction(() => {
      db.exec(step);
      db.pragma(`user_version = ${version + 1}`);
      if (version === 0) db.pragma(`application_id = ${APPLICATION_ID}`);
    })();
    version++;
  }
}

function moveAside(path: string): string {
  const stamp = new Date()
    .toISOString()
    .replace(/[-:]/g, '')
    .replace(/\.\d+Z$/, 'Z');
  const aside = `${path}.corrupt-${stamp}`;
  renameSync(path, aside);
  for (const ext of ['-wal', '-shm']) if (existsSync(path + ext)) renameSync(path + ext, aside + ext);
  return aside;
}

/** Opens (creating and migrating) the store a writer uses. `warn` hears about a file moved aside. */
export function openStoreForWriting(path: string, warn: (message: string) => void): StoreDb {
  let problem: string | undefined = problemWithFile(path);
  let db: StoreDb | undefined;
  if (!problem) {
    try {
      db = new Database(path);
    } catch (err) {
      const code = (err as { code?: string }).code;
      if (code === 'SQLITE_NOTADB' || code === 'SQLITE_CORRUPT')
        problem = `it cannot be opened (${(err as Error).message})`;
      else throw err;
    }
    if (db) {
      const p = problemWithDb(db);
      if (p && !p.movable) {
        db.close();
        throw new StoreFileError(`history store ${path}: ${p.reason}.`);
      }
      if (p) {
        db.close();
        db = undefined;
        problem = p.reason;
      }
    }
  }
  if (problem) {
    const aside = moveAside(path);
    warn(
      `history store ${path} is refused: ${problem}. It was moved aside to ${aside}, untouched; a new store starts.`,
    );
    db = new Database(path);
  }
  applyPragmas(db!, false);
  migrate(db!);
  return db!;
}

/**
 * Opens an existing store to read (query commands); refuses a missing, foreign, corrupt or newer file. `check`
 * false skips the integrity check (the server reading the store its own writer has just checked).
 */
export function openStoreForReading(path: string, check = true): StoreDb {
  if (!existsSync(path)) {
    throw new StoreFileError(
      `no history store at ${path}; a run, replay or demo writes one (give --store FILE or --data DIR).`,
    );
  }
  const problem = problemWithFile(path);
  if (problem) throw new StoreFileError(`${path} is not a floorline history store: ${problem}.`);
  let db: StoreDb;
  try {
    db = new Database(path, { readonly: true, fileMustExist: true });
  } catch (err) {
    throw new StoreFileError(
      `${path} is not a floorline history store: it cannot be opened (${(err as Error).message}).`,
    );
  }
  applyPragmas(db, true);
  const p = check ? problemWithDb(db) : undefined;
  const version = p ? 0 : (db.pragma('user_version', { simple: true }) as number);
  // An older schema reads as it is: versions only add tables, so every query but the newer tables' answers
  // (e.g. /api/spectra says the store keeps none until an agent has migrated it).
  if (p || version < 1 || version > SCHEMA_VERSION) {
    db.close();
    throw new StoreFileError(
      p
        ? `${path} is not a usable floorline history store: ${p.reason}.`
        : `${path} has schema ${version}; open it once with a running agent to migrate it to ${SCHEMA_VERSION}.`,
    );
  }
  return db;
}

/** Opens a store for a short write (a note from the CLI), migrating like a writer but never moving the file. */
export function openStoreForNote(path: string): StoreDb {
  if (!existsSync(path))
    throw new StoreFileError(
      `no history store at ${path}; a run, replay or demo writes one (give --store FILE or --data DIR).`,
    );
  const problem = problemWithFile(path);
  if (problem) throw new StoreFileError(`${path} is not a floorline history store: ${problem}.`);
  const db = new Database(path, { fileMustExist: true });
  const p = problemWithDb(db);
  if (p) {
    db.close();
    throw new StoreFileError(`${path} is not a usable floorline history store: ${p.reason}.`);
  }
  applyPragmas(db, false);
  migrate(db);
  return db;
}
