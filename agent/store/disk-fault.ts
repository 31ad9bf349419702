// Faults of the disk under the store (full, read-only, gone), as SQLite and Node report them: the monitor keeps
// running without history on these, while a foreign or locked store is still refused.
const CODES = new Set([
  'SQLITE_FULL',
  'SQLITE_READONLY',
  'SQLITE_IOERR',
  'SQLITE_CANTOPEN',
  'ENOSPC',
  'EROFS',
  'EDQUOT',
  'EACCES',
  'EPERM',
]);

export function isDiskFault(err: unknown): boolean {
  const e = err as { code?: unknown; message?: unknown } | null;
  if (!e) return false;
  if (typeof e.code === 'string' && [...CODES].some((c) => (e.code as string).startsWith(c))) return true;
  return (
    typeof e.message === 'string' &&
    /database or disk is full|disk I\/O error|readonly database|no space left/i.test(e.message)
  );
}
