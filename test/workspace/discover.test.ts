import { describe, expect, it } from 'vitest';
import { mkdirSync, symlinkSync } from 'node:fs';
import { join, relative } from 'node:path';
import { discoverFiles } from '../../server/src/workspace/discover';
import { parseProjectFile } from '../../server/src/workspace/project';
import { useTempTrees } from './helpers';

const tree = useTempTrees();

/** Discovered files relative to `root`, in the order returned. */
function found(root: string, inputs: string[], cwd = root) {
  const result = discoverFiles(inputs, cwd);
  return { files: result.files.map((f) => relative(root, f)), errors: result.errors };
}

describe('discoverFiles', () => {
  it('with no input walks the current folder for yaml, yml, json, jsonc and toml files, sorted', () => {
    const root = tree({
      'b.yaml': '',
      'a.yml': '',
      'sub/c.json': '',
      'sub/d.jsonc': '',
      'sub/e.toml': '',
      'notes.txt': '',
      'README.md': '',
      'sub/deeper/E.YAML': '',
    });
    expect(found(root, [])).toEqual({ files: ['a.yml', 'b.yaml', 'sub/c.json', 'sub/d.jsonc', 'sub/deeper/E.YAML', 'sub/e.toml'], errors: [] });
  });

  it('always skips node_modules and .git, and never lists project files', () => {
    const root = tree({
      'node_modules/pkg/config.json': '',
      'deep/node_modules/x.yaml': '',
      '.git/config.yaml': '',
      'noiselint.project.yaml': '',
      'keep.yaml': '',
    });
    expect(found(root, ['.']).files).toEqual(['keep.yaml']);
  });

  it('honours .gitignore, nested .gitignore files and negations', () => {
    const root = tree({
      '.git/HEAD': '',
      '.gitignore': 'outputs/\n*.tmp.yaml\n',
      'outputs/run1/config.yaml': '',
      'a.tmp.yaml': '',
      'a.yaml': '',
      'runs/.gitignore': 'scratch-*.yaml\n!scratch-keep.yaml\n',
      'runs/scratch-1.yaml': '',
      'runs/scratch-keep.yaml': '',
      'runs/real.yaml': '',
    });
    expect(found(root, []).files).toEqual(['a.yaml', 'runs/real.yaml', 'runs/scratch-keep.yaml']);
  });

  it('applies the .gitignore files of parent folders up to the repository root', () => {
    const root = tree({
      '.git/HEAD': '',
      '.gitignore': 'generated/\n',
      'examples/generated/x.yaml': '',
      'examples/y.yaml': '',
    });
    expect(found(root, ['examples']).files).toEqual(['examples/y.yaml']);
    // Run from inside the sub-folder: the repository's .gitignore still applies.
    expect(found(root, ['.'], join(root, 'examples')).files).toEqual(['examples/y.yaml']);
  });

  it('honours the project include and exclude globs (relative to the project folder)', () => {
    const root = tree({
      'noiselint.project.yaml': 'include: ["configs/**"]\nexclude: ["configs/archive/**"]\n',
      'configs/a.yaml': '',
      'configs/args.toml': '',
      'configs/archive/old.yaml': '',
      'configs/archive/old.toml': '',
      'other/b.yaml': '',
      'other/c.toml': '',
    });
    expect(found(root, []).files).toEqual(['configs/a.yaml', 'configs/args.toml']);
  });

  it('uses a given project instead of looking one up', () => {
    const root = tree({ 'noiselint.project.yaml': 'exclude: ["a.yaml"]\n', 'a.yaml': '', 'b.yaml': '' });
    const project = { ...parseProjectFile('exclude: ["b.yaml"]', join(root, 'noiselint.project.yaml')) };
    expect(discoverFiles([], root, project).files.map((f) => relative(root, f))).toEqual(['a.yaml']);
    expect(found(root, []).files).toEqual(['b.yaml']);
  });

  it('expands globs relative to the current folder (any extension the glob names)', () => {
    const root = tree({
      'runs/a/train.yaml': '',
      'runs/b/train.yaml': '',
      'runs/b/sample.yaml': '',
      'runs/b/train.cfg': '',
      'node_modules/runs/x/train.yaml': '',
    });
    expect(found(root, ['runs/**/train.*']).files).toEqual(['runs/a/train.yaml', 'runs/b/train.cfg', 'runs/b/train.yaml']);
    expect(found(root, ['runs/*/sample.yaml']).files).toEqual(['runs/b/sample.yaml']);
  });

  it('refuses a named file of a type it does not read, loudly; dedupes overlapping inputs', () => {
    const root = tree({ 'x.conf': '', 'a/b.yaml': '', 'c.JSON': '' });
    expect(found(root, ['x.conf', 'a', 'a/b.yaml', 'a/*.yaml', 'c.JSON'])).toEqual({
      files: ['a/b.yaml', 'c.JSON'],
      errors: ['x.conf: not a file type noiselint reads (.yaml, .yml, .json, .jsonc, .toml)'],
    });
  });

  it('reports missing paths and empty globs as one-line errors and keeps going', () => {
    const root = tree({ 'a.yaml': '' });
    const result = found(root, ['missing.yaml', 'nothing/**/*.yaml', 'a.yaml']);
    expect(result.files).toEqual(['a.yaml']);
    expect(result.errors).toEqual(['missing.yaml: no such file or folder', 'nothing/**/*.yaml: no files match']);
  });

  it('does not follow symlinked folders (no loops)', () => {
    const root = tree({ 'real/a.yaml': '' });
    symlinkSync(root, join(root, 'real/loop'));
    mkdirSync(join(root, 'empty'));
    expect(found(root, []).files).toEqual(['real/a.yaml']);
  });

  it('stops at the file bound with an error instead of growing without end', () => {
    const files: Record<string, string> = {};
    for (let i = 0; i < 12; i++) files[`f${String(i).padStart(2, '0')}.yaml`] = '';
    const root = tree(files);
    const result = discoverFiles([], root, undefined, { maxFiles: 5 });
    expect(result.files).toHaveLength(5);
    expect(result.errors[0]).toMatch(/stopped after 5 files/);
  });
});

describe('discoverFiles: globs and ignores together', () => {
  it('a glob whose only matches are git-ignored reports that nothing matches', () => {
    const root = tree({ '.git/HEAD': '', '.gitignore': 'outputs/\n', 'outputs/a.yaml': '' });
    expect(found(root, ['outputs/*.yaml'])).toEqual({ files: [], errors: ['outputs/*.yaml: no files match'] });
  });

  it('exactly maxFiles files is not an overflow', () => {
    const root = tree({ 'a.yaml': '', 'b.yaml': '' });
    expect(discoverFiles([], root, undefined, { maxFiles: 2 }).errors).toEqual([]);
  });
});
