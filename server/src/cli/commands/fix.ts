/**
 * `noiselint fix [paths...] [--accept-retraining] [--accept-comment-edits] [--dry-run]`
 *
 * Applies the sampling-only fixes to the files `check` would look at (fixes that change what the
 * model learns with --accept-retraining, fixes that touch a comment with --accept-comment-edits), repeating
 * until nothing changes. --dry-run prints a unified diff and writes nothing. A file is written
 * atomically (temporary file in the same folder, fsync, original mode, rename) and only when it
 * parsed cleanly, is writable, and did not change on disk meanwhile.
 *
 * Exit codes: 0 done; 1 some file could not be fixed or written; 2 bad usage or unreadable input.
 */
import { parseArgs } from 'node:util';
import { randomBytes } from 'node:crypto';
import {
  accessSync,
  chmodSync,
  chownSync,
  closeSync,
  constants as fsConstants,
  fsyncSync,
  openSync,
  readFileSync,
  realpathSync,
  renameSync,
  statSync,
  unlinkSync,
  writeSync,
} from 'node:fs';
import { basename, dirname, join } from 'node:path';
import { createTwoFilesPatch } from 'diff';
import { analyzeText, type FileResult } from '../../engine/api';
import { fixText, type FixLoopResult } from '../../fix/loop';
import { LineIndex } from '../../parse/lineIndex';
import { PARSE_ERROR_ID } from '../../rules';
import { discoverFiles } from '../../workspace/discover';
import { describeFsError, nodeFs, readTextFile } from '../../workspace/fs';
import { loadProject, ProjectFileError, type ResolvedProject } from '../../workspace/project';
import { UsageError, type CliIO } from '../io';
import { printable, printableLine } from '../output/printable';
import { displayPath } from '../output/report';
import { WorkspaceSession } from '../../workspace/session';

interface FixArgs {
  inputs: string[];
  acceptRetraining: boolean;
  acceptCommentEdits: boolean;
  dryRun: boolean;
}

function parseFixArgs(args: string[]): FixArgs {
  let parsed;
  try {
    parsed = parseArgs({
      args,
      allowPositionals: true,
      strict: true,
      options: {
        'accept-retraining': { type: 'boolean', default: false },
        'accept-comment-edits': { type: 'boolean', default: false },
        'dry-run': { type: 'boolean', default: false },
      },
    });
  } catch (err) {
    throw new UsageError(err instanceof Error ? err.message : String(err));
  }
  return {
    inputs: parsed.positionals,
    acceptRetraining: !!parsed.values['accept-retraining'],
    acceptCommentEdits: !!parsed.values['accept-comment-edits'],
    dryRun: !!parsed.values['dry-run'],
  };
}

export async function runFix(args: string[], io: CliIO): Promise<number> {
  const options = parseFixArgs(args);
  // Every name printed for a person is escaped (control and bidi characters in file names).
  const shown = (p: string) => printable(displayPath(io.cwd, p));
  // The same files `check` looks at.
  const found = discoverFiles(options.inputs, io.cwd);
  let ioError = found.errors.length > 0;
  for (const e of found.errors) io.stderr(`noiselint fix: ${printableLine(e)}\n`);
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
    if (options.dryRun) {
      io.stdout(createTwoFilesPatch(`a/${name}`, `b/${name}`, original, result.text));
      report(`${name}: would apply ${what}\n`);
      filesChanged++;
      fixesApplied += count;
      continue;
    }
    const written = writeAtomically(file, original, result.text);
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
  return notWritten ? 1 : 0;
}

function summariseRules(result: FixLoopResult): string {
  const counts = new Map<string, number>();
  for (const a of result.applied) counts.set(a.rule, (counts.get(a.rule) ?? 0) + 1);
  return [...counts].map(([rule, n]) => (n > 1 ? `${rule} x${n}` : rule)).join(', ');
}

type WriteResult = { ok: true } | { ok: false; problem: string };

/**
 * Replaces the file's content in one step: a temporary file in the same folder gets the new text,
 * is flushed to disk, takes the original's mode (and owner, where allowed) and is renamed over the
 * original. A read-only file, or one that changed since it was read, is left alone.
 */
export function writeAtomically(path: string, expected: string, text: string): WriteResult {
  let target: string;
  let mode: number;
  let uid: number;
  let gid: number;
  try {
    target = realpathSync(path);
    const st = statSync(target);
    if (!st.isFile()) return { ok: false, problem: 'not a regular file' };
    mode = st.mode & 0o7777;
    uid = st.uid;
    gid = st.gid;
  } catch (err) {
    return { ok: false, problem: describeFsError(err) };
  }
  // Mode bits first: the superuser passes access() even for a file marked read-only.
  if ((mode & 0o222) === 0) return { ok: false, problem: 'the file is read-only' };
  try {
    accessSync(target, fsConstants.W_OK);
  } catch {
    return { ok: false, problem: 'the file is read-only' };
  }
  try {
    if (!readFileSync(target).equals(Buffer.from(expected, 'utf8'))) return { ok: false, problem: 'the file changed on disk while it was being fixed' };
  } catch (err) {
    return { ok: false, problem: describeFsError(err) };
  }
  const temp = join(dirname(target), `.${basename(target)}.${randomBytes(6).toString('hex')}.noiselint-tmp`);
  let fd: number | null = null;
  try {
    fd = openSync(temp, 'wx', mode);
    const bytes = Buffer.from(text, 'utf8');
    let off = 0;
    while (off < bytes.length) off += writeSync(fd, bytes, off, bytes.length - off);
    fsyncSync(fd);
    closeSync(fd);
    fd = null;
    chmodSync(temp, mode);
    if (typeof process.getuid === 'function' && process.getuid() === 0) {
      try {
        chownSync(temp, uid, gid);
      } catch {
        // Keeping the owner is best effort.
      }
    }
    renameSync(temp, target);
  } catch (err) {
    if (fd !== null) {
      try {
        closeSync(fd);
      } catch {
        // already closed
      }
    }
    try {
      unlinkSync(temp);
    } catch {
      // never created, or already renamed
    }
    return { ok: false, problem: `cannot write: ${describeFsError(err)}` };
  }
  try {
    // Make the rename itself durable (best effort: not every platform can fsync a folder).
    const dirFd = openSync(dirname(target), 'r');
    try {
      fsyncSync(dirFd);
    } finally {
      closeSync(dirFd);
    }
  } catch {
    // ignored
  }
  return { ok: true };
}
