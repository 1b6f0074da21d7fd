/**
 * `noiselint check [paths|globs...] [--format text|json|sarif] [--max-warnings N] [--quiet]`
 *
 * Exit codes: 0 no errors and at most N warnings; 1 otherwise; 2 bad arguments, an invalid project
 * file, or a file or folder that could not be read (the others are still checked).
 */
import { parseArgs } from 'node:util';
import { LruCache } from '@noiselint/shared-math';
import { analyzeRead, analyzeText, findingsAsData, readFile, type AnalyzeOptions, type FileReading, FileResult } from '../../engine/api';
import type { PartnerDocument } from '../../rules/types';
import { ALL_RULE_METAS } from '../../rules';
import { discoverFiles } from '../../workspace/discover';
import { nodeFs, readTextFile, type TextReadResult, type WorkspaceFs } from '../../workspace/fs';
import { findPartners, MAX_AUTO_CANDIDATES, PairingMemo, roleOfSetups, type FileRole } from '../../workspace/pairing';
import { loadProject, ProjectFileError, type ResolvedProject } from '../../workspace/project';

import { UsageError, type CliIO } from '../io';
import { formatJson } from '../output/json';
import { displayPath, summarize, type CheckReport, type Summary } from '../output/report';
import { formatSarif } from '../output/sarif';
import { formatText } from '../output/text';

/** Keep in step with main.ts. */
import { VERSION as CHECK_TOOL_VERSION } from '../../base/version';

/** Progress on a terminal only for runs at least this long. */
const PROGRESS_MIN_FILES = 20;

export type CheckFormat = 'text' | 'json' | 'sarif';

export interface CheckOptions {
  inputs: string[];
  format: CheckFormat;
  maxWarnings: number;
  quiet: boolean;
}

export function parseCheckArgs(args: string[]): CheckOptions {
  let parsed;
  try {
    parsed = parseArgs({
      args,
      allowPositionals: true,
      strict: true,
      options: {
        format: { type: 'string', default: 'text' },
        'max-warnings': { type: 'string' },
        quiet: { type: 'boolean', default: false },
      },
    });
  } catch (err) {
    throw new UsageError(err instanceof Error ? err.message.split('\n')[0] : String(err));
  }
  const format = parsed.values.format;
  if (format !== 'text' && format !== 'json' && format !== 'sarif') {
    throw new UsageError(`--format must be text, json or sarif, not "${format}"`);
  }
  let maxWarnings = Infinity;
  const raw = parsed.values['max-warnings'];
  if (raw !== undefined) {
    if (!/^\d+$/.test(raw.trim())) throw new UsageError(`--max-warnings must be a whole number >= 0, not "${raw}"`);
    maxWarnings = Number(raw.trim());
  }
  return { inputs: parsed.positionals, format, maxWarnings, quiet: parsed.values.quiet ?? false };
}

/** A file read and analysed without rules (a role probe or a partner). */
interface Peeked {
  text: string;
  project: ResolvedProject;
  result: FileReading;
}

/**
 * Files read without rules kept by a session. Automatic pairing looks within one folder (at most
 * MAX_AUTO_CANDIDATES files) and files are checked folder by folder, so twice that keeps every
 * probe until its own check and its partners' checks, and the run's memory stays flat on large
 * trees (a miss only costs a second reading).
 */
const PEEK_CACHE_ENTRIES = 2 * MAX_AUTO_CANDIDATES;

/** Analyses files the way `check` does; shared with tests and other commands. */
export class CheckSession {
  private readonly peeked = new LruCache<string, Peeked | null>(PEEK_CACHE_ENTRIES, PEEK_CACHE_ENTRIES);
  private readonly roleCache = new Map<string, FileRole>();
  /** File-system facts of pairing: the tree does not change during a run. */
  private readonly pairing: PairingMemo;
  readonly warnings: string[] = [];
  private readonly warned = new Set<string>();
  private readonly pairsChecked = new Set<ResolvedProject>();

  /**
   * `showPath` turns a partner's absolute path into the one messages name (check passes the path
   * relative to the current folder); related locations resolve it back against the same folder.
   */
  constructor(
    private readonly fs: WorkspaceFs = nodeFs,
    private readonly showPath: (absPath: string) => string = (p) => p,
    /** Project of each file, when the caller has already loaded them (saves a lookup per probe). */
    private readonly projects: ReadonlyMap<string, ResolvedProject> = new Map(),
  ) {
    this.pairing = new PairingMemo(fs);
  }

  private warnOnce(message: string): void {
    if (this.warned.has(message)) return;
    this.warned.add(message);
    this.warnings.push(message);
  }

  /** A file analysed without rules (a partner or a role probe), memoised; null when unreadable. */
  private peek(path: string): Peeked | null {
    const cached = this.peeked.get(path);
    if (cached !== undefined) return cached;
    let entry: Peeked | null = null;
    try {
      const project = this.projects.get(path) ?? loadProject(path, this.fs);
      const read = readTextFile(this.fs, path, project.limits.maxFileBytes);
      if (read.ok) entry = { text: read.text, project, result: readFile(read.text, { path, project }) };
    } catch {
      entry = null;
    }
    this.peeked.set(path, entry);
    return entry;
  }

  roleOf = (path: string): FileRole => {
    let role = this.roleCache.get(path);
    if (!role) {
      const peeked = this.peek(path);
      role = peeked ? roleOfSetups(peeked.result.documents.map((d) => d.setup)) : 'none';
      this.roleCache.set(path, role);
    }
    return role;
  };

  /** Pairing for one file: its role and the documents of its partner file(s). */
  partnersOf(path: string, project: ResolvedProject): { pairRole?: 'training' | 'sampling'; partners: PartnerDocument[]; texts: Map<string, string> } {
    if (!this.pairsChecked.has(project)) {
      this.pairsChecked.add(project);
      for (const w of this.pairing.pairs(project).warnings) this.warnOnce(w);
    }
    const texts = new Map<string, string>();
    const match = findPartners(path, project, { roleOf: this.roleOf, memo: this.pairing });
    if (!match) return { partners: [], texts };
    const partners: PartnerDocument[] = [];
    for (const partner of match.partners) {
      const peeked = this.peek(partner);
      if (!peeked) {
        this.warnOnce(`${partner}: paired file could not be read; pair ignored`);
        continue;
      }
      texts.set(partner, peeked.text);
      for (const doc of peeked.result.documents) {
        if (doc.setup.isDiffusionConfig) partners.push({ path: this.showPath(partner), setup: doc.setup, analysis: doc.analysis });
      }
    }
    return partners.length ? { pairRole: match.role, partners, texts } : { partners: [], texts };
  }

  /**
   * The text of a file as `check` reads it. The reading is kept (parsed, without rules) for
   * pairing and for the file's own analysis, so each file is read and parsed once per run.
   */
  readText(path: string, project: ResolvedProject): TextReadResult {
    const peeked = this.peek(path);
    if (peeked && peeked.project === project) return { ok: true, text: peeked.text };
    // Unreadable (the reason is read again) or governed by another project than the probe's.
    return readTextFile(this.fs, path, project.limits.maxFileBytes);
  }

  /**
   * The whole analysis of `path`, whose text is `text`. When pairing already read the same text
   * under the same project (its role probe), the rules run on that reading: nothing is parsed twice.
   */
  analyze(path: string, text: string, options: Omit<AnalyzeOptions, 'path'> & { project: ResolvedProject }): FileResult {
    const full: AnalyzeOptions = { ...options, path };
    const peeked = this.peeked.get(path);
    const reusable = peeked && peeked.text === text && peeked.project === options.project && !options.format && !options.limits;
    return reusable ? analyzeRead(peeked.result, full) : analyzeText(text, full);
  }
}

export async function runCheck(args: string[], io: CliIO): Promise<number> {
  const options = parseCheckArgs(args);
  return check(options, io);
}

export async function check(options: CheckOptions, io: CliIO, fs: WorkspaceFs = nodeFs): Promise<number> {
  const report: CheckReport = { cwd: io.cwd, files: [], skipped: [], otherTexts: new Map(), notices: [] };
  const notice = (level: 'error' | 'warning', message: string) => {
    report.notices.push({ level, message });
    io.stderr(`noiselint check: ${level === 'warning' ? 'warning: ' : ''}${message}\n`);
  };
  const shown = (p: string) => displayPath(io.cwd, p);

  const discovered = discoverFiles(options.inputs, io.cwd, undefined, { fs });
  for (const e of discovered.errors) notice('error', e);

  // Every project file first: an invalid one stops the run before any output.
  const projects = new Map<string, ResolvedProject>();
  try {
    for (const file of discovered.files) projects.set(file, loadProject(file, fs));
  } catch (err) {
    if (err instanceof ProjectFileError) {
      io.stderr(`noiselint check: ${shown(err.file)}: ${err.field ? `${err.field}: ` : ''}${err.detail}\n`);
      return 2;
    }
    throw err;
  }

  const session = new CheckSession(fs, shown, projects);
  const progress = io.isTTY && discovered.files.length >= PROGRESS_MIN_FILES;
  let done = 0;
  for (const file of discovered.files) {
    if (progress) io.stderr(`\rchecking ${++done}/${discovered.files.length}`);
    const project = projects.get(file)!;
    const read = session.readText(file, project);
    if (!read.ok) {
      if (progress) io.stderr('\r\x1b[K');
      if (read.kind === 'io') notice('error', `${shown(file)}: ${read.problem}`);
      else {
        report.skipped.push({ path: file, reason: read.problem });
        io.stderr(`noiselint check: ${shown(file)}: ${read.problem}\n`);
      }
      continue;
    }
    let result: FileResult;
    try {
      // Pairing reads the folder's files (their roles); the file's own check reuses that reading.
      const pairing = session.partnersOf(file, project);
      for (const [p, t] of pairing.texts) report.otherTexts.set(p, t);
      result = session.analyze(file, read.text, { project, partners: pairing.partners, pairRole: pairing.pairRole });
    } catch (err) {
      // The core never throws by contract; if it does, one file's failure must not end the run.
      notice('error', `${shown(file)}: internal error while checking: ${err instanceof Error ? err.message.split('\n')[0] : String(err)}`);
      continue;
    }
    // As data: the report outlives every file's tree.
    report.files.push({ path: file, text: read.text, findings: findingsAsData(result.findings), isDiffusionConfig: result.isDiffusionConfig });
  }
  if (progress) io.stderr('\r\x1b[K');
  for (const w of session.warnings) notice('warning', relativizeWarning(w, io.cwd));

  const all = summarize(report.files);
  let hidden: Summary | undefined;
  if (options.quiet) {
    hidden = { errors: 0, warnings: all.warnings, infos: all.infos, hints: all.hints };
    report.files = report.files.map((f) => ({ ...f, findings: f.findings.filter((x) => x.severity === 'error') }));
  }

  if (options.format === 'json') io.stdout(formatJson(report));
  else if (options.format === 'sarif') io.stdout(formatSarif(report, { version: CHECK_TOOL_VERSION, rules: ALL_RULE_METAS }));
  else if (!options.quiet || all.errors > 0 || all.warnings > options.maxWarnings || report.notices.length) {
    const color = io.isTTY && !io.env.NO_COLOR;
    io.stdout(formatText(report, { color, hidden }));
  }

  if (report.notices.some((n) => n.level === 'error')) return 2;
  if (all.errors > 0 || all.warnings > options.maxWarnings) return 1;
  return 0;
}

/** Pairing warnings name absolute paths; show them relative to the run's folder. */
function relativizeWarning(message: string, cwd: string): string {
  const prefix = `${cwd}/`;
  return message.split(prefix).join('');
}
