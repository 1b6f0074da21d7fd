/** Glob selection helpers shared by the session and the language server (paths in POSIX form). */
import { isAbsolute, relative, sep } from 'node:path';
import { compileGlob } from './glob';

/** `path` is `folder` or lies below it. */
export function isInside(folder: string, path: string): boolean {
  const rel = relative(folder, path);
  return rel === '' || (rel !== '..' && !rel.startsWith(`..${sep}`) && !isAbsolute(rel));
}

/** `path` relative to `base` with forward slashes (glob matching, messages); unchanged when outside. */
export function relativePosix(base: string, path: string): string {
  if (!isInside(base, path)) return path;
  return relative(base, path).split(sep).join('/');
}

/** The last path segment, for either separator. */
export function baseName(path: string): string {
  const i = Math.max(path.lastIndexOf('/'), path.lastIndexOf('\\'));
  return i >= 0 ? path.slice(i + 1) : path;
}

const MATCHER_CACHE_ENTRIES = 100;
const matchers = new Map<string, (path: string) => boolean>();

/** A matcher for a glob list (memoised); a malformed glob matches nothing. */
export function globMatcher(globs: readonly string[]): (path: string) => boolean {
  const key = JSON.stringify(globs);
  let m = matchers.get(key);
  if (!m) {
    try {
      m = compileGlob(globs, { dot: true });
    } catch {
      m = () => false;
    }
    if (matchers.size >= MATCHER_CACHE_ENTRIES) matchers.clear();
    matchers.set(key, m);
  }
  return m;
}
