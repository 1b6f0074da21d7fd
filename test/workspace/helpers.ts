import { mkdirSync, mkdtempSync, realpathSync, rmSync, writeFileSync } from 'node:fs';
import { afterEach } from 'vitest';
import { clearProjectCache } from '../../server/src/workspace/project';
import { tmpdir } from 'node:os';
import { dirname, join } from 'node:path';

/** A fresh temp folder with the given files (path -> content); returns its real path. */
export function makeTree(files: Record<string, string | Uint8Array>): string {
  const root = mkdtempSync(join(tmpdir(), 'noiselint-ws-'));
  writeTree(root, files);
  return root;
}

export function writeTree(root: string, files: Record<string, string | Uint8Array>): void {
  for (const [rel, content] of Object.entries(files)) {
    const path = join(root, rel);
    mkdirSync(dirname(path), { recursive: true });
    writeFileSync(path, content);
  }
}

export function removeTree(root: string): void {
  rmSync(root, { recursive: true, force: true });
}

/**
 * `tree(files)` for a test file: real-path temp trees that are removed, together with the
 * project-file cache, after each test.
 */
export function useTempTrees(): (files: Record<string, string>) => string {
  const roots: string[] = [];
  afterEach(() => {
    clearProjectCache();
    while (roots.length) removeTree(roots.pop()!);
  });
  return (files) => {
    const root = realpathSync(makeTree(files));
    roots.push(root);
    return root;
  };
}
