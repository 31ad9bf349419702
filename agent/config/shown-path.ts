// A file path as pages, status and banners show it: relative to the working folder when the file lies inside it, so
// a dashboard client (possibly on another host) is not shown this machine's folder layout; else as given.
import { isAbsolute, relative, resolve, sep } from 'node:path';

export function shownPath(path: string): string {
  const rel = relative(process.cwd(), resolve(path));
  const inside = rel !== '' && rel !== '..' && !rel.startsWith('..' + sep) && !isAbsolute(rel);
  return inside ? rel : path;
}
