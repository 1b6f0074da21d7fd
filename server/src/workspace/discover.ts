/**
 * Which files a run checks. Inputs are files, folders or globs (none: the current folder).
 *
 * - A file named on the command line is checked when its extension is one noiselint reads; any
 *   other extension is refused with a one-line error (never skipped silently).
 * - A folder is walked for *.yaml, *.yml, *.json, *.jsonc and *.toml files.
 * - A glob is matched against paths relative to the current folder; it picks the extensions itself.
 * - Walks honour .gitignore files (nested ones too, and those of parent folders up to the folder
 *   that holds `.git`) and the project file's include / exclude. node_modules and .git folders are
 *   always skipped; symlinked folders are not followed. Project files are never checked.
 * - The result is sorted and free of duplicates.
 */
import { dirname, join, relative, resolve, sep } from 'node:path';
import { compileGlob, GlobError, globBase, hasGlobSyntax, parseIgnore, type IgnoreRules } from './glob';
import { describeFsError, nodeFs, type DirEntry, type WorkspaceFs } from './fs';
import { PROJECT_FILE_NAMES, loadProjectOfListedFolder } from './projectFile';
import type { ResolvedProject } from './types';

export const CONFIG_EXTENSIONS = ['.yaml', '.yml', '.json', '.jsonc', '.toml'] as const;

const ALWAYS_SKIPPED = new Set(['node_modules', '.git']);
/** Bounds on one run: beyond these the walk stops with an error instead of growing without end. */
const DEFAULT_MAX_FILES = 100_000;
const DEFAULT_MAX_ENTRIES = 1_000_000;
const MAX_GITIGNORE_BYTES = 1024 * 1024;

export interface DiscoverOptions {
  fs?: WorkspaceFs;
  maxFiles?: number;
  /** Folder entries looked at, all walks together. */
  maxEntries?: number;
}

export interface DiscoverResult {
  /** Absolute paths, sorted. */
  files: string[];
  /** One line each: inputs that do not exist, globs that match nothing, unreadable folders. */
  errors: string[];
  /** The same problems as data: the path (as given, or the folder) and the reason. */
  problems: { path: string; reason: string }[];
  /** One line each: .gitignore files or patterns left out (too large, too many wildcards). */
  warnings: string[];
}

interface IgnoreLayer {
  base: string;
  rules: IgnoreRules;
}

export function isConfigFileName(name: string): boolean {
  const lower = name.toLowerCase();
  return CONFIG_EXTENSIONS.some((ext) => lower.endsWith(ext));
}

export function isProjectFileName(name: string): boolean {
  return (PROJECT_FILE_NAMES as readonly string[]).includes(name);
}

const toPosix = (p: string) => (sep === '/' ? p : p.split(sep).join('/'));

const matcherCache = new WeakMap<ResolvedProject, { include: ((p: string) => boolean) | null; exclude: ((p: string) => boolean) | null }>();

/** True when the project's include / exclude globs let `file` through (paths relative to its root). */
export function projectSelects(project: ResolvedProject, file: string): boolean {
  let m = matcherCache.get(project);
  if (!m) {
    m = {
      include: project.include.length ? safeMatcher(project.include) : null,
      exclude: project.exclude.length ? safeMatcher(project.exclude) : null,
    };
    matcherCache.set(project, m);
  }
  const rel = toPosix(relative(project.root, file));
  if (m.exclude && m.exclude(rel)) return false;
  if (m.include && !m.include(rel)) return false;
  return true;
}

/** The project file refuses bad globs when it is loaded; a hand-made project's bad glob matches nothing. */
function safeMatcher(globs: string[]): (p: string) => boolean {
  try {
    return compileGlob(globs, { dot: true });
  } catch {
    return () => false;
  }
}

export function discoverFiles(inputs: string[], cwd: string, project?: ResolvedProject, options: DiscoverOptions = {}): DiscoverResult {
  const fs = options.fs ?? nodeFs;
  const state = {
    fs,
    project,
    files: new Set<string>(),
    errors: [] as string[],
    problems: [] as { path: string; reason: string }[],
    warnings: [] as string[],
    entries: 0,
    maxFiles: options.maxFiles ?? DEFAULT_MAX_FILES,
    maxEntries: options.maxEntries ?? DEFAULT_MAX_ENTRIES,
    stopped: false,
  };
  const list = inputs.length ? inputs : ['.'];
  for (const input of list) {
    if (state.stopped) break;
    const abs = resolve(cwd, input);
    const st = fs.stat(abs);
    if (st?.kind === 'file') {
      const name = abs.slice(abs.lastIndexOf(sep) + 1);
      if (isConfigFileName(name) || isProjectFileName(name)) state.files.add(abs);
      else problem(state, input, `not a file type noiselint reads (${CONFIG_EXTENSIONS.join(', ')})`);
    } else if (st?.kind === 'dir') {
      walk(abs, state, null);
    } else if (st) {
      problem(state, input, 'not a regular file or folder');
    } else if (hasGlobSyntax(input)) {
      let matches: (p: string) => boolean;
      try {
        matches = compileGlob(toPosix(relative(cwd, resolve(cwd, input))) || '.', { dot: false });
      } catch (err) {
        if (!(err instanceof GlobError)) throw err;
        problem(state, input, `glob refused: ${err.message}`);
        continue;
      }
      let matched = 0;
      const base = resolve(cwd, globBase(input));
      if (fs.stat(base)?.kind === 'dir') matched = walk(base, state, (file) => matches(toPosix(relative(cwd, file))));
      if (matched === 0) problem(state, input, 'no files match');
    } else {
      problem(state, input, 'no such file or folder');
    }
  }
  return { files: [...state.files].sort(comparePaths), errors: state.errors, problems: state.problems, warnings: [...new Set(state.warnings)] };
}

function problem(state: { errors: string[]; problems: { path: string; reason: string }[] }, path: string, reason: string): void {
  state.errors.push(`${path}: ${reason}`);
  state.problems.push({ path, reason });
}

interface WalkState {
  fs: WorkspaceFs;
  project?: ResolvedProject;
  files: Set<string>;
  errors: string[];
  problems: { path: string; reason: string }[];
  warnings: string[];
  entries: number;
  maxFiles: number;
  maxEntries: number;
  stopped: boolean;
}

/**
 * Walks `root` depth-first in name order; returns how many files it accepted (duplicates
 * included). `select` replaces the extension filter (globs).
 */
function walk(root: string, state: WalkState, select: ((file: string) => boolean) | null): number {
  let accepted = 0;
  const layers = ancestorIgnoreLayers(root, state.fs, state.warnings);
  const stack: { dir: string; layers: IgnoreLayer[] }[] = [{ dir: root, layers }];
  while (stack.length) {
    const { dir, layers: inherited } = stack.pop()!;
    let entries;
    try {
      entries = state.fs.readDir(dir);
    } catch (err) {
      problem(state, dir, `cannot read folder: ${describeFsError(err)}`);
      continue;
    }
    entries.sort((a, b) => (a.name < b.name ? -1 : a.name > b.name ? 1 : 0));
    const own = entries.some((e) => e.name === '.gitignore' && e.kind === 'file') ? loadIgnoreLayer(dir, state.fs, state.warnings) : null;
    const layers = own ? [...inherited, own] : inherited;
    const project = state.project ?? safeProject(dir, entries, state.fs);
    const subdirs: string[] = [];
    for (const entry of entries) {
      if (++state.entries > state.maxEntries) {
        problem(state, root, `stopped after looking at ${state.maxEntries} folder entries; name fewer or smaller folders`);
        state.stopped = true;
        return accepted;
      }
      if (ALWAYS_SKIPPED.has(entry.name)) continue;
      const path = join(dir, entry.name);
      if (entry.kind === 'dir') {
        if (entry.isSymlink || isIgnored(layers, path, true)) continue;
        subdirs.push(path);
      } else if (entry.kind === 'file') {
        if (isProjectFileName(entry.name)) continue;
        if (select ? !select(path) : !isConfigFileName(entry.name)) continue;
        if (isIgnored(layers, path, false)) continue;
        if (project && !projectSelects(project, path)) continue;
        if (!state.files.has(path) && state.files.size >= state.maxFiles) {
          problem(state, root, `stopped after ${state.maxFiles} files; name fewer or smaller folders`);
          state.stopped = true;
          return accepted;
        }
        state.files.add(path);
        accepted++;
      }
    }
    // Reverse so that popping visits sub-folders in name order.
    for (let i = subdirs.length - 1; i >= 0; i--) stack.push({ dir: subdirs[i]!, layers });
  }
  return accepted;
}

/** Discovery must not fail on a bad project file: check reports it when it loads the project. */
function safeProject(dir: string, entries: readonly DirEntry[], fs: WorkspaceFs): ResolvedProject | undefined {
  try {
    return loadProjectOfListedFolder(dir, entries, fs);
  } catch {
    return undefined;
  }
}

function loadIgnoreLayer(dir: string, fs: WorkspaceFs, warnings: string[]): IgnoreLayer | null {
  const path = join(dir, '.gitignore');
  const st = fs.stat(path);
  if (!st || st.kind !== 'file') return null;
  const tooLarge = () => {
    warnings.push(`${path}: not used: above ${MAX_GITIGNORE_BYTES} bytes`);
    return null;
  };
  if (st.size > MAX_GITIGNORE_BYTES) return tooLarge();
  try {
    const bytes = fs.readBytes(path, MAX_GITIGNORE_BYTES);
    if (bytes.length > MAX_GITIGNORE_BYTES) return tooLarge();
    const rules = parseIgnore(new TextDecoder('utf-8').decode(bytes), path);
    warnings.push(...rules.warnings);
    return { base: dir, rules };
  } catch {
    return null;
  }
}

/** .gitignore files of the folders above `root`, up to the one that holds `.git` (if any). */
function ancestorIgnoreLayers(root: string, fs: WorkspaceFs, warnings: string[]): IgnoreLayer[] {
  const chain: string[] = [];
  let dir = dirname(root);
  let gitRoot: string | null = fs.stat(join(root, '.git')) ? root : null;
  while (!gitRoot) {
    chain.push(dir);
    if (fs.stat(join(dir, '.git'))) gitRoot = dir;
    const up = dirname(dir);
    if (up === dir) break;
    dir = up;
  }
  if (!gitRoot) return [];
  const layers: IgnoreLayer[] = [];
  for (const d of chain.reverse()) {
    const layer = loadIgnoreLayer(d, fs, warnings);
    if (layer) layers.push(layer);
  }
  return layers;
}

/** Git's order: deeper .gitignore files speak last; a `!pattern` can take a path back. */
function isIgnored(layers: IgnoreLayer[], path: string, isDir: boolean): boolean {
  let ignored = false;
  for (const layer of layers) {
    const rel = toPosix(relative(layer.base, path));
    if (!rel || rel === '..' || rel.startsWith('../')) continue;
    const verdict = layer.rules.test(isDir ? `${rel}/` : rel);
    if (verdict.ignored) ignored = true;
    else if (verdict.unignored) ignored = false;
  }
  return ignored;
}

function comparePaths(a: string, b: string): number {
  return a < b ? -1 : a > b ? 1 : 0;
}
