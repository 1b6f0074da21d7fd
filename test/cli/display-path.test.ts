/**
 * Report paths: displayPath takes a short cut for a normal path below the run's folder. Checked
 * against Node's own path.relative (the reference) on the cases where a short cut could go wrong.
 */
import { isAbsolute, relative, sep } from 'node:path';
import { describe, expect, it } from 'vitest';
import { displayPath } from '../../server/src/cli/output/report';

/** What displayPath gave before the short cut: path.relative, `.` for the folder itself, absolute when on another drive. */
function reference(cwd: string, path: string): string {
  const rel = relative(cwd, path);
  const shown = rel === '' ? '.' : isAbsolute(rel) ? path : rel;
  return sep === '/' ? shown : shown.split(sep).join('/');
}

const CASES: [string, string][] = [
  ['/work/run', '/work/run/a.yaml'],
  ['/work/run', '/work/run/deep/er/a.yaml'],
  ['/work/run', '/work/run'],
  ['/work/run', '/work/running/a.yaml'],
  ['/work/run', '/work/other/a.yaml'],
  ['/work/run', '/work/run/../run/a.yaml'],
  ['/work/run', '/work/run/./a.yaml'],
  ['/work/run', '/work/run//a.yaml'],
  ['/work/run', '/work/run/a/'],
  ['/work/run', '/work/run/a/..'],
  ['/work/run', '/work/run/.hidden/a.yaml'],
  ['/work/run', '/work/run/...'],
  ['/work/run/', '/work/run/a.yaml'],
  ['/work/./run', '/work/./run/a.yaml'],
  ['/work/../run', '/work/../run/a.yaml'],
  ['/', '/a.yaml'],
  ['/', '/work/a.yaml'],
  ['run', 'run/a.yaml'],
];

describe('displayPath', () => {
  it.each(CASES)('from %s to %s: the same as path.relative', (cwd, path) => {
    expect(displayPath(cwd, path)).toBe(reference(cwd, path));
  });

  it('a file directly below the folder is its name (the short cut itself)', () => {
    expect(displayPath('/work/run', '/work/run/batch-0001/train-a.yaml')).toBe('batch-0001/train-a.yaml');
  });
});
