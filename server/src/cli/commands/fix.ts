/**
 * `noiselint fix [paths...] [options]`: options and exit codes in FIX_SPEC (`--help`).
 *
 * Applies the sampling-only fixes to the files `check` would look at (fixes that change what the
 * model learns with --accept-retraining, fixes that touch a comment with --accept-comment-edits), repeating
 * until nothing changes. --dry-run prints a unified diff and writes nothing. A file is written
 * atomically (temporary file in the same folder, fsync, original mode, rename), in the encoding it
 * was read in, and only when it parsed cleanly, is writable, and did not change on disk meanwhile.
 */
import { randomBytes } from 'node:crypto';
import {
  accessSync,
  chmodSync,
  chownSync,
  closeSync,
  constants as fsConstants,
  fstatSync,
  fsyncSync,
  ftruncateSync,
  openSync,
  readSync,
  realpathSync,
  renameSync,
  statSync,
  unlinkSync,
  writeSync,
  type BigIntStats,
} from 'node:fs';
import { basename, dirname, join, resolve, sep } from 'node:path';
import { analyzeText, type FileResult } from '../../engine/api';
import { fixText, type FixLoopResult } from '../../fix/loop';
import { LineIndex } from '../../parse/lineIndex';
import { PARSE_ERROR_ID } from '../../rules';
import { discoverFiles } from '../../workspace/discover';
import { describeFsError, encodeText, nodeFs, readTextFile, type TextEncoding } from '../../workspace/fs';
import { loadProject, ProjectFileError, type ResolvedProject } from '../../workspace/project';
import type { CliIO } from '../io';
import { helpText, parseCommandArgs, type CommandSpec } from '../options';
import { unifiedPatch } from '../output/patch';
import { printable, printableLine } from '../output/printable';
import { displayPath } from '../output/report';
import { WorkspaceSession } from '../../workspace/session';

export const FIX_SPEC: CommandSpec = {
  name: 'fix',
  summary: 'Applies the fixes of `check` to the files, as minimal edits that keep comments and layout.',
  usage: '[paths|globs...] [options]',
  details: [
    'Inputs as for `check` (none: the current folder). Without consent flags only sampling-only',
    'fixes that keep every comment are applied: a trained checkpoint stays valid.',
  ],
  options: [
    {
      name: 'accept-retraining',
      type: 'boolean',
      description: 'Also apply fixes that change what the model learns (the checkpoint then needs fine-tuning or retraining).',
    },
    { name: 'accept-comment-edits', type: 'boolean', description: 'Also apply fixes that rewrite or delete part of a comment you wrote.' },
    { name: 'dry-run', short: 'n', type: 'boolean', description: 'Print the changes as a unified diff and write nothing.' },
  ],
  exitCodes: [
    [0, 'done (with --dry-run: nothing to change)'],
    [1, 'with --dry-run: changes are pending; otherwise some file could not be fixed or written'],
    [2, 'bad arguments, an invalid project file, or an input that could not be read'],
  ],
  examples: ['noiselint fix --dry-run configs/', 'noiselint fix -n . && echo "nothing to fix"'],
};

interface FixArgs {
  inputs: string[];
  acceptRetraining: boolean;
  acceptCommentEdits: boolean;
  dryRun: boolean;
  help: boolean;
}

function parseFixArgs(args: string[]): FixArgs {
  const parsed = parseCommandArgs(FIX_SPEC, args);
  return {
    inputs: parsed.positionals,
    acceptRetraining: parsed.values['accept-retraining'] === true,
    acceptCommentEdits: parsed.values['accept-comment-edits'] === true,
    dryRun: parsed.values['dry-run'] === true,
    help: parsed.help,
  };
}

export async function runFix(args: string[], io: CliIO): Promise<number> {
  const options = parseFixArgs(args);
  if (options.help) {
    io.stdout(helpText(FIX_SPEC));
    return 0;
  }
  // Every name printed for a person is escaped (control and bidi characters in file names).
  const shown = (p: string) => printable(displayPath(io.cwd, p));
  // The same files `check` looks at.
  const found = discoverFiles(options.inputs, io.cwd);
  const scope = checkedScope(options.inputs, io.cwd);
  let ioError = found.errors.length > 0;
  for (const e of found.errors) io.stderr(`noiselint fix: ${printableLine(e)}\n`);
  for (const w of found.warnings) io.stderr(`noiselint fix: warning: ${printableLine(w.split(`${io.cwd}/`).join(''))}\n`);
  const projects = new Map<string, ResolvedProject>();
  try {
    for (const file of found.files) projects.set(file, loadProject(file));
  } catch (err) {
    if (err instanceof ProjectFileError) {
      io.stderr(`noiselint fix: ${shown(err.file)}: ${printableLine(`${err.field ? `${err.field}: ` : ''}${err.detail}`)}\n`);
      return 2;
    }
    throw err;
  }
  // A dry run keeps stdout for the patch; its summary goes to stderr.
  const report = options.dryRun ? io.stderr : io.stdout;
  let notWritten = false;
  let filesChanged = 0;
  let fixesApplied = 0;
  let heldForRetraining = 0;
  let heldForComments = 0;
  const session = new WorkspaceSession({ stableTree: true });
  for (const file of found.files) {
    const name = shown(file);
    const project = projects.get(file)!;
    const read = readTextFile(nodeFs, file, project.limits.maxFileBytes);
    if (!read.ok) {
      io.stderr(`${name}: ${read.problem}\n`);
      if (read.kind === 'io') ioError = true;
      continue;
    }
    const original = read.text;
    let result: FixLoopResult;
    try {
      const pairing = session.partnersOf(file, project);
      const analyze = (text: string): FileResult =>
        analyzeText(text, { path: file, project, partners: pairing.partners, pairRole: pairing.pairRole });
      result = fixText(original, analyze, options);
    } catch (err) {
      io.stderr(`${name}: not fixed: internal error: ${err instanceof Error ? err.message.split('\n')[0] : String(err)}\n`);
      notWritten = true;
      continue;
    }
    heldForRetraining += result.heldForRetraining;
    heldForComments += result.heldForComments;
    if (result.parseError) {
      // A broken file that is not a diffusion config (no parse-error finding) is none of our business.
      if (!result.initialFindings.some((f) => f.rule === PARSE_ERROR_ID)) continue;
      const at = new LineIndex(original).positionAt(result.parseError.span.start);
      io.stderr(`${name}:${at.line + 1}:${at.character + 1}: not fixed: the file does not parse (${result.parseError.message})\n`);
      notWritten = true;
      continue;
    }
    if (result.brokeText) io.stderr(`${name}: some fixes were left out: they would have broken the file\n`);
    if (result.text === original) continue;
    const count = result.applied.length;
    const what = `${count} ${count === 1 ? 'fix' : 'fixes'} (${summariseRules(result)})`;
    const outside = scope.explicit.has(file) ? null : linkedOutside(file, scope.roots, project);
    if (outside) {
      io.stderr(`${name}: not written: it links to ${shown(outside.target)}, outside ${outside.where}; name the link itself to fix it\n`);
      notWritten = true;
      continue;
    }
    if (options.dryRun) {
      io.stdout(unifiedPatch(`a/${name}`, `b/${name}`, original, result.text, result.changes));
      report(`${name}: would apply ${what}\n`);
      filesChanged++;
      fixesApplied += count;
      continue;
    }
    const written = writeAtomically(file, original, result.text, read.encoding);
    if (!written.ok) {
      io.stderr(`${name}: not written: ${written.problem}; ${what} not applied\n`);
      notWritten = true;
      continue;
    }
    report(`${name}: applied ${what}\n`);
    filesChanged++;
    fixesApplied += count;
  }
  for (const w of session.warnings) io.stderr(`noiselint fix: warning: ${printableLine(w.split(`${io.cwd}/`).join(''))}\n`);
  const verb = options.dryRun ? 'Would apply' : 'Applied';
  const files = `${filesChanged} ${filesChanged === 1 ? 'file' : 'files'}`;
  report(`${verb} ${fixesApplied} ${fixesApplied === 1 ? 'fix' : 'fixes'} in ${files}.\n`);
  if (heldForRetraining > 0) {
    report(
      `${heldForRetraining} more ${heldForRetraining === 1 ? 'finding has a fix that changes' : 'findings have fixes that change'} what the model ` +
        'learns (the checkpoint then needs fine-tuning or retraining); add --accept-retraining to apply them.\n',
    );
  }
  if (heldForComments > 0) {
    report(
      `${heldForComments} more ${heldForComments === 1 ? 'finding has a fix' : 'findings have fixes'} that would rewrite a comment ` +
        `you wrote; add --accept-comment-edits to apply ${heldForComments === 1 ? 'it' : 'them'}.\n`,
    );
  }
  if (ioError) return 2;
  // A dry run gates a build: pending changes are exit code 1.
  if (options.dryRun && filesChanged > 0) return 1;
  return notWritten ? 1 : 0;
}

interface Scope {
  /** Files named on the command line: written through a symlink, wherever it points. */
  explicit: Set<string>;
  /** Folders the run was asked to check (links resolved). */
  roots: string[];
}

function checkedScope(inputs: string[], cwd: string): Scope {
  const explicit = new Set<string>();
  const roots: string[] = [];
  for (const input of inputs.length ? inputs : ['.']) {
    const abs = resolve(cwd, input);
    const st = nodeFs.stat(abs);
    if (st?.kind === 'file') explicit.add(abs);
    else {
      const base = st?.kind === 'dir' ? abs : resolve(cwd, globBase(input));
      roots.push(nodeFs.realpath(base) ?? base);
    }
  }
  return { explicit, roots };
}

/** The folders of a glob before its first segment with a wildcard (`configs/**\/*.yaml` -> `configs`). */
function globBase(pattern: string): string {
  const segments = pattern.replace(/\\/g, '/').split('/');
  const first = segments.findIndex((s) => /[*?[\]{}()!]/.test(s));
  return first < 0 ? pattern : segments.slice(0, first).join('/') || '.';
}

const isInside = (path: string, folder: string) => path === folder || path.startsWith(folder.endsWith(sep) ? folder : folder + sep);

/**
 * Where a found file really lives when that is outside the checked folders (or outside the
 * project, when there is a project file): `fix .` must not rewrite a file elsewhere on the disk
 * through a link planted in the tree.
 */
function linkedOutside(file: string, roots: string[], project: ResolvedProject): { target: string; where: string } | null {
  const target = nodeFs.realpath(file);
  if (!target) return null;
  if (!roots.some((r) => isInside(target, r))) return { target, where: 'the checked folders' };
  if (project.file !== null) {
    const root = nodeFs.realpath(project.root) ?? project.root;
    if (!isInside(target, root)) return { target, where: 'the project folder' };
  }
  return null;
}

function summariseRules(result: FixLoopResult): string {
  const counts = new Map<string, number>();
  for (const a of result.applied) counts.set(a.rule, (counts.get(a.rule) ?? 0) + 1);
  return [...counts].map(([rule, n]) => (n > 1 ? `${rule} x${n}` : rule)).join(', ');
}

type WriteResult = { ok: true; inPlace?: boolean } | { ok: false; problem: string };

const CHANGED = 'the file changed on disk while it was being fixed';

/** Identity and content stamp of an open file: an edit changes the size or the mtime (ns). */
function sameStamp(a: BigIntStats, b: BigIntStats): boolean {
  return a.dev === b.dev && a.ino === b.ino && a.size === b.size && a.mtimeNs === b.mtimeNs && a.ctimeNs === b.ctimeNs;
}

/** The whole content behind `fd`, read from offset 0 (bounded by the size the caller expects). */
function contentOf(fd: number, max: number): Buffer {
  const out = Buffer.allocUnsafe(max + 1);
  let total = 0;
  while (total < out.length) {
    const n = readSync(fd, out, total, out.length - total, total);
    if (n <= 0) break;
    total += n;
  }
  return out.subarray(0, total);
}

function writeAll(fd: number, bytes: Buffer, at: number | null = null): void {
  let off = 0;
  while (off < bytes.length) off += writeSync(fd, bytes, off, bytes.length - off, at === null ? null : at + off);
}

function removeQuietly(path: string): void {
  try {
    unlinkSync(path);
  } catch {
    // never created, or already renamed
  }
}

/** A new file in `dir` named after `name` (hidden, random, clearly ours) holding `bytes`, flushed. */
function writeSibling(dir: string, name: string, suffix: string, bytes: Buffer, mode: number): string {
  const path = join(dir, `.${name}.${randomBytes(6).toString('hex')}.${suffix}`);
  const fd = openSync(path, 'wx', mode);
  try {
    writeAll(fd, bytes);
    fsyncSync(fd);
  } catch (err) {
    closeSync(fd);
    removeQuietly(path);
    throw err;
  }
  closeSync(fd);
  return path;
}

function syncFolder(dir: string): void {
  try {
    // Make a rename durable (best effort: not every platform can fsync a folder).
    const dirFd = openSync(dir, 'r');
    try {
      fsyncSync(dirFd);
    } finally {
      closeSync(dirFd);
    }
  } catch {
    // ignored
  }
}

/**
 * Replaces the file's content in one step: a temporary file in the same folder gets the new text,
 * is flushed to disk, takes the original's mode (and owner, where allowed) and is renamed over the
 * original. A read-only file, or one that changed since it was read, is left alone.
 *
 * An edit saved while the fix is written is never lost: identity (device, inode, size, mtime,
 * ctime) and content are compared once more right before the rename, and the original stays open
 * so that an edit that lands in the old file between that check and the rename is seen after it;
 * the edited file is then put back (its bytes win over the fix).
 *
 * A file with more than one hard link is written in place so that every name sees the fix (a
 * rename would give this name a new file and leave the others on the old text). That write is
 * not atomic; a flushed copy of the original (`.<name>.<random>.noiselint-backup`) is kept until
 * the new content is on disk, so a crash in between leaves the original's bytes beside the file.
 */
export function writeAtomically(path: string, expected: string, text: string, encoding: TextEncoding = 'utf-8'): WriteResult {
  let target: string;
  let fd: number;
  try {
    target = realpathSync(path);
    fd = openSync(target, fsConstants.O_RDONLY | fsConstants.O_NONBLOCK);
  } catch (err) {
    return { ok: false, problem: describeFsError(err) };
  }
  try {
    return writeOpened(target, fd, encodeText(expected, encoding), encodeText(text, encoding));
  } catch (err) {
    return { ok: false, problem: `cannot write: ${describeFsError(err)}` };
  } finally {
    closeSync(fd);
  }
}

function writeOpened(target: string, fd: number, expected: Buffer, bytes: Buffer): WriteResult {
  const st = fstatSync(fd, { bigint: true });
  if (!st.isFile()) return { ok: false, problem: 'not a regular file' };
  const mode = Number(st.mode & 0o7777n);
  // Mode bits first: the superuser passes access() even for a file marked read-only.
  if ((mode & 0o222) === 0) return { ok: false, problem: 'the file is read-only' };
  try {
    accessSync(target, fsConstants.W_OK);
  } catch {
    return { ok: false, problem: 'the file is read-only' };
  }
  if (!contentOf(fd, expected.length).equals(expected)) return { ok: false, problem: CHANGED };
  if (st.nlink > 1n) return writeInPlace(target, st, expected, bytes, mode);

  const dir = dirname(target);
  const temp = writeSibling(dir, basename(target), 'noiselint-tmp', bytes, mode);
  try {
    chmodSync(temp, mode);
    if (typeof process.getuid === 'function' && process.getuid() === 0) {
      try {
        chownSync(temp, Number(st.uid), Number(st.gid));
      } catch {
        // Keeping the owner is best effort.
      }
    }
    // Right before the rename: the same file (by path and by the open descriptor), the same bytes.
    const byPath = statSync(target, { bigint: true });
    if (!sameStamp(st, byPath) || !sameStamp(st, fstatSync(fd, { bigint: true })) || !contentOf(fd, expected.length).equals(expected)) {
      removeQuietly(temp);
      return { ok: false, problem: CHANGED };
    }
    renameSync(temp, target);
  } catch (err) {
    removeQuietly(temp);
    throw err;
  }
  // An edit written into the old file after the check above went to the file the rename just
  // replaced; the open descriptor still reaches it. Put the user's bytes back.
  // (Size and mtime only: the rename itself changes the old file's link count and ctime.)
  const after = fstatSync(fd, { bigint: true });
  if (after.size !== st.size || after.mtimeNs !== st.mtimeNs) {
    const theirs = contentOf(fd, Math.max(expected.length, bytes.length) * 4 + 1024 * 1024);
    const back = writeSibling(dir, basename(target), 'noiselint-tmp', theirs, mode);
    renameSync(back, target);
    syncFolder(dir);
    return { ok: false, problem: `${CHANGED}; the edited file is kept` };
  }
  syncFolder(dir);
  return { ok: true };
}

/** Writes the new bytes into the file itself (hard links keep sharing it), with a backup first. */
function writeInPlace(target: string, st: BigIntStats, expected: Buffer, bytes: Buffer, mode: number): WriteResult {
  const dir = dirname(target);
  const backup = writeSibling(dir, basename(target), 'noiselint-backup', expected, mode & 0o600);
  syncFolder(dir);
  let fd: number | null = null;
  try {
    fd = openSync(target, fsConstants.O_RDWR | fsConstants.O_NONBLOCK);
    if (!sameStamp(st, fstatSync(fd, { bigint: true })) || !contentOf(fd, expected.length).equals(expected)) {
      removeQuietly(backup);
      return { ok: false, problem: CHANGED };
    }
    try {
      writeAll(fd, bytes, 0);
      ftruncateSync(fd, bytes.length);
      fsyncSync(fd);
    } catch (err) {
      // Put the original bytes back; the backup stays if even that fails.
      writeAll(fd, expected, 0);
      ftruncateSync(fd, expected.length);
      fsyncSync(fd);
      removeQuietly(backup);
      throw err;
    }
  } finally {
    if (fd !== null) closeSync(fd);
  }
  removeQuietly(backup);
  return { ok: true, inPlace: true };
}
