/**
 * Builds the bundled server (`node scripts/build.mjs`) once for the LSP tests: test files run in
 * parallel workers, so a lock folder serialises the build and a freshness check skips it when
 * server/dist/noiselint.js is newer than every source file.
 */
import { execFileSync } from 'node:child_process';
import { mkdirSync, readdirSync, rmdirSync, statSync } from 'node:fs';
import { join } from 'node:path';
import { fileURLToPath } from 'node:url';

export const REPO_ROOT = fileURLToPath(new URL('../..', import.meta.url));
export const SERVER_BUNDLE = join(REPO_ROOT, 'server/dist/noiselint.js');
const LOCK = join(REPO_ROOT, 'build/lsp-test-build.lock');
const SOURCE_DIRS = ['server/src', 'shared-math/src'];
const STALE_LOCK_MS = 5 * 60_000;

function newestSource(dir: string): number {
  let newest = 0;
  const stack = [dir];
  while (stack.length) {
    const d = stack.pop()!;
    for (const e of readdirSync(d, { withFileTypes: true })) {
      const p = join(d, e.name);
      if (e.isDirectory()) stack.push(p);
      else if (e.isFile()) newest = Math.max(newest, statSync(p).mtimeMs);
    }
  }
  return newest;
}

function isFresh(): boolean {
  let built: number;
  try {
    built = statSync(SERVER_BUNDLE).mtimeMs;
  } catch {
    return false;
  }
  const newest = Math.max(statSync(join(REPO_ROOT, 'scripts/build.mjs')).mtimeMs, ...SOURCE_DIRS.map((d) => newestSource(join(REPO_ROOT, d))));
  return built >= newest;
}

function sleep(ms: number): void {
  Atomics.wait(new Int32Array(new SharedArrayBuffer(4)), 0, 0, ms);
}

export function ensureServerBuilt(): string {
  // A job that has just built a bundle (anywhere) can point the tests at it.
  const prebuilt = process.env.NOISELINT_TEST_SERVER;
  if (prebuilt) return prebuilt;
  if (isFresh()) return SERVER_BUNDLE;
  mkdirSync(join(REPO_ROOT, 'build'), { recursive: true });
  for (;;) {
    try {
      mkdirSync(LOCK);
      break;
    } catch {
      try {
        if (Date.now() - statSync(LOCK).mtimeMs > STALE_LOCK_MS) rmdirSync(LOCK);
      } catch {
        // The holder just released it.
      }
      sleep(200);
    }
  }
  try {
    if (!isFresh()) execFileSync(process.execPath, ['scripts/build.mjs'], { cwd: REPO_ROOT, stdio: 'pipe' });
  } finally {
    rmdirSync(LOCK);
  }
  return SERVER_BUNDLE;
}
