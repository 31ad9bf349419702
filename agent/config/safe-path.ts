// Resolves a client- or user-named path inside a root folder and refuses anything that would leave it:
// `../` escapes, absolute paths elsewhere, and symbolic links whose target lies outside the root.
import { existsSync, realpathSync } from 'node:fs';
import { dirname, isAbsolute, relative, resolve, sep } from 'node:path';
import { FloorlineError } from '../errors.ts';

export class PathOutsideError extends FloorlineError {
  override readonly name = 'PathOutsideError';
  constructor(message: string) {
    super('PATH_OUTSIDE_DATA_FOLDER', message);
  }
}

function isInside(root: string, candidate: string): boolean {
  const rel = relative(root, candidate);
  return rel === '' || (!rel.startsWith('..' + sep) && rel !== '..' && !isAbsolute(rel));
}

/** The real path of the deepest existing ancestor of p, with the not-yet-existing tail appended. */
function realpathOfExistingPart(p: string): string {
  let head = p;
  const tail: string[] = [];
  while (!existsSync(head)) {
    const parent = dirname(head);
    if (parent === head) break;
    tail.unshift(head.slice(parent.length + (parent.endsWith(sep) ? 0 : 1)));
    head = parent;
  }
  const real = existsSync(head) ? realpathSync(head) : head;
  return tail.length ? resolve(real, ...tail) : real;
}

/**
 * Returns the absolute path of `name` inside `root` (relative names are taken relative to root).
 * Throws PathOutsideError naming the path and the fix when it would resolve outside root.
 */
export function resolveInside(root: string, name: string, what = 'path'): string {
  if (typeof name !== 'string' || name.length === 0 || name.includes('\0')) {
    throw new PathOutsideError(`${what} must be a non-empty file name inside the data folder`);
  }
  const absRoot = resolve(root);
  const candidate = resolve(absRoot, name);
  const realRoot = existsSync(absRoot) ? realpathSync(absRoot) : absRoot;
  if (!isInside(absRoot, candidate) || !isInside(realRoot, realpathOfExistingPart(candidate))) {
    throw new PathOutsideError(
      `${what} '${name}' is outside the data folder; name a file inside it (e.g. recordings/NAME.wav).`,
    );
  }
  return candidate;
}
