/**
 * `noiselint check [paths|globs|-...] [options]`: options and exit codes in CHECK_SPEC (`--help`).
 *
 * `--show` is the faintest severity listed (the others are still counted); each `--budget` lets
 * at most N findings at or above a severity pass. Without an `error=` budget, no error may pass.
 */
import { availableParallelism, totalmem } from 'node:os';
import { resolve } from 'node:path';
import { ALL_RULE_METAS } from '../../rules';
import { discoverFiles } from '../../workspace/discover';
import { decodeText, nodeFs, withExtraFile, type WorkspaceFs } from '../../workspace/fs';
import { loadProject, loadProjectOfFile, ProjectFileError, type ResolvedProject } from '../../workspace/project';
import { httpsDocsBase } from '../../workspace/ruleDocs';
import { WorkspaceSession } from '../../workspace/session';

import { UsageError, type CliIO } from '../io';
import { COLOR_OPTION, useColor, type ColorChoice } from '../color';
import { helpText, parseCommandArgs, type CommandSpec } from '../options';
import { formatAnnotations } from '../output/annotations';
import { EDIT_FORMS, JSON_FORMS, JsonReportWriter, type EditForm, type JsonForm } from '../output/json';
import { atOrAbove, displayPath, summarize, type BudgetResult, type CheckReport, type Summary } from '../output/report';
import { SEVERITIES, type Severity } from '../../base/findings';
import { addSummary, emptySummary, FileChecker, type FileCheckSink } from './checkFiles';
import { checkInWorkers, chunkChecker, chunksOf, replay, workerHeapMb, workersFor, WORKER_MIN_FILES } from './checkWorkers';
import { printableLine } from '../output/printable';
import { formatSarif } from '../output/sarif';
import { formatText } from '../output/text';

/** Keep in step with main.ts. */
import { VERSION as CHECK_TOOL_VERSION } from '../../base/version';

/** Progress on a terminal only for runs at least this long. */
const PROGRESS_MIN_FILES = 20;

export const CHECK_FORMATS = ['text', 'json', 'sarif', 'annotations'] as const;
export type CheckFormat = (typeof CHECK_FORMATS)[number];

/** The name a run reads from standard input under, when --as does not give one. */
export const STDIN_NAME = '<stdin>';

export const CHECK_SPEC: CommandSpec = {
  name: 'check',
  summary: 'Checks diffusion training and sampling configs and reports what is quietly wrong, with the numbers.',
  usage: '[paths|globs|-...] [options]',
  details: [
    'Inputs are files, folders (walked for the config types noiselint reads; .gitignore and the',
    'project file apply) or globs; none: the current folder. `-` reads one config from standard',
    'input; give --as <path> so the project file, pairing and the file type follow that path.',
  ],
  options: [
    {
      name: 'format',
      short: 'f',
      type: 'string',
      value: 'text|json|sarif|annotations',
      choices: CHECK_FORMATS,
      description: 'Report format (default text). annotations: CI workflow commands (::error file=...).',
    },
    {
      name: 'show',
      type: 'string',
      value: 'severity',
      choices: SEVERITIES,
      description: 'List findings of this severity or more severe only (default hint: all); the rest still count.',
    },
    {
      name: 'budget',
      type: 'string',
      value: 'severity=N',
      multiple: true,
      description: 'At most N findings at or above the severity may pass (repeatable); default error=0.',
    },
    {
      name: 'fix-edits',
      type: 'string',
      value: 'compact|full|none',
      choices: EDIT_FORMS,
      description: 'How the JSON report writes fix edits (default compact).',
    },
    {
      name: 'json-form',
      type: 'string',
      value: 'compact|full',
      choices: JSON_FORMS,
      description: 'JSON findings with array ranges and default fields left out (compact, the default), or every field (full).',
    },
    {
      name: 'workers',
      type: 'string',
      value: 'N',
      description: `Threads for runs of ${WORKER_MIN_FILES} files or more, this one included (default: the available cores; 1: this thread only).`,
    },
    COLOR_OPTION,
    { name: 'as', type: 'string', value: 'path', description: 'With `-`: the path the text on standard input stands for.' },
    { name: 'empty-ok', type: 'boolean', description: 'Exit 0 even when an input holds no diffusion config (e.g. hooks on changed files).' },
    {
      name: 'docs-base',
      type: 'string',
      value: 'https-url',
      description: 'Link rule ids in SARIF to <url>/<rule-id>.md (https only; default: no links).',
    },
  ],
  exitCodes: [
    [0, 'the findings fit every budget (by default: no error)'],
    [1, 'a budget is exceeded'],
    [
      2,
      'bad arguments, an invalid project file, an input that could not be read or checked (a named file that is binary, over a limit or of another type), or an input with no diffusion config (unless --empty-ok)',
    ],
  ],
  examples: [
    'noiselint check configs/',
    'noiselint check --budget warning=0 -f sarif configs/ > noiselint.sarif',
    'cat train.yaml | noiselint check - --as configs/train.yaml',
  ],
};

export interface CheckOptions {
  inputs: string[];
  format: CheckFormat;
  /** The faintest severity listed; fainter findings are counted but not listed. */
  show: Severity;
  /** At most `allowed` findings at or above `severity` may pass. */
  budgets: Budget[];
  /** How the JSON report writes fix edits (default compact). */
  fixEdits?: EditForm;
  /** How the JSON report writes findings (default compact). */
  jsonForm?: JsonForm;
  color?: ColorChoice;
  /** With `-` among the inputs: the path the text on standard input stands for. */
  stdinPath?: string;
  /** An input without any diffusion config is fine. */
  emptyOk?: boolean;
  /** https base of the rule pages linked from SARIF. */
  docsBase?: string;
  /** Threads for large runs, the run's own included (default: the available cores; 1: no workers). */
  workers?: number;
  /** `--help` was given. */
  help?: boolean;
}

export interface Budget {
  severity: Severity;
  allowed: number;
  /** Given on the command line (not the built-in `error=0`). */
  explicit: boolean;
}

function severityArg(flag: string, raw: string): Severity {
  const s = raw.trim() as Severity;
  if (!SEVERITIES.includes(s)) throw new UsageError(`${flag} takes a severity (${SEVERITIES.join(', ')}), not "${raw}"`);
  return s;
}

/** `warning=5` -> { severity: 'warning', allowed: 5 }. */
function budgetArg(raw: string): Budget {
  const m = /^\s*([a-z]+)\s*=\s*(\d+)\s*$/.exec(raw);
  if (!m) throw new UsageError(`--budget takes <severity>=<count>, e.g. warning=5, not "${raw}"`);
  return { severity: severityArg('--budget', m[1]!), allowed: Number(m[2]), explicit: true };
}

export function parseCheckArgs(args: string[]): CheckOptions {
  const parsed = parseCommandArgs(CHECK_SPEC, args);
  if (parsed.help) return { inputs: [], format: 'text', show: 'hint', budgets: [], help: true };
  const v = parsed.values;
  const show = severityArg('--show', typeof v.show === 'string' ? v.show : 'hint');
  const budgets = (Array.isArray(v.budget) ? v.budget : []).map(budgetArg);
  for (const [i, b] of budgets.entries()) {
    if (budgets.findIndex((o) => o.severity === b.severity) !== i) throw new UsageError(`--budget ${b.severity}= is given twice`);
  }
  if (!budgets.some((b) => b.severity === 'error')) budgets.unshift({ severity: 'error', allowed: 0, explicit: false });
  const fixEdits = (typeof v['fix-edits'] === 'string' ? v['fix-edits'] : 'compact') as EditForm;
  const stdinCount = parsed.positionals.filter((p) => p === '-').length;
  if (stdinCount > 1) throw new UsageError('`-` (standard input) may be given once');
  const stdinPath = typeof v.as === 'string' ? v.as : undefined;
  if (stdinPath !== undefined && stdinCount === 0) throw new UsageError('--as names the file on standard input; add `-` to read it');
  if (stdinPath !== undefined && stdinPath.trim() === '') throw new UsageError('--as needs a path');
  let workers: number | undefined;
  if (typeof v.workers === 'string') {
    if (!/^\s*\d+\s*$/.test(v.workers) || Number(v.workers) < 1)
      throw new UsageError(`--workers takes a whole number of threads (1 or more), not "${v.workers}"`);
    workers = Number(v.workers);
  }
  const docsBase = typeof v['docs-base'] === 'string' ? v['docs-base'] : undefined;
  if (docsBase !== undefined && !httpsDocsBase(docsBase)) throw new UsageError(`--docs-base must be an https URL, not "${docsBase}"`);
  return {
    inputs: parsed.positionals,
    format: (v.format as CheckFormat | undefined) ?? 'text',
    show,
    budgets,
    fixEdits,
    jsonForm: (typeof v['json-form'] === 'string' ? v['json-form'] : 'compact') as JsonForm,
    color: v.color as ColorChoice | undefined,
    stdinPath,
    emptyOk: v['empty-ok'] === true,
    docsBase,
    workers,
  };
}

export async function runCheck(args: string[], io: CliIO): Promise<number> {
  const options = parseCheckArgs(args);
  if (options.help) {
    io.stdout(helpText(CHECK_SPEC));
    return 0;
  }
  return check(options, io);
}

/** Standard input, when the run reads it: the bytes and the absolute path they stand for. */
interface StdinInput {
  path: string;
  bytes: Uint8Array;
}

export async function check(options: CheckOptions, io: CliIO, diskFs: WorkspaceFs = nodeFs): Promise<number> {
  const unchecked: { path: string; reason: string }[] = [];
  const report: CheckReport = { cwd: io.cwd, files: [], skipped: [], unchecked, otherTexts: new Map(), notices: [] };
  const notice = (level: 'error' | 'warning', message: string) => {
    report.notices.push({ level, message });
    io.stderr(`noiselint check: ${level === 'warning' ? 'warning: ' : ''}${printableLine(message)}\n`);
  };
  const shown = (p: string) => displayPath(io.cwd, p);

  let stdin: StdinInput | null = null;
  if (options.inputs.includes('-')) {
    if (!io.readStdin) throw new UsageError('standard input cannot be read here');
    stdin = { path: resolve(io.cwd, options.stdinPath ?? STDIN_NAME), bytes: await io.readStdin() };
  }
  // Standard input is read as the file it stands for: pairing and discovery see it there.
  const fs = stdin ? withExtraFile(diskFs, stdin.path, stdin.bytes) : diskFs;

  // Each input on its own, so that one that holds no config can be named.
  const named = options.inputs.filter((i) => i !== '-');
  const inputs = named.length || stdin ? named : ['.'];
  const filesOf = new Map<string, string[]>();
  const namedFiles = new Set<string>();
  const discoveryFailed = new Set<string>();
  const wanted = new Set<string>();
  for (const input of inputs) {
    const found = discoverFiles([input], io.cwd, undefined, { fs });
    for (const e of found.errors) notice('error', e);
    for (const w of found.warnings) notice('warning', relativizeWarning(w, io.cwd));
    for (const p of found.problems) unchecked.push({ path: p.path, reason: p.reason });
    if (found.errors.length) discoveryFailed.add(input);
    filesOf.set(input, found.files);
    if (fs.stat(resolve(io.cwd, input))?.kind === 'file') for (const f of found.files) namedFiles.add(f);
    for (const f of found.files) wanted.add(f);
  }
  if (stdin) wanted.delete(stdin.path);
  const files = [...wanted].sort();

  // Every project file first: an invalid one stops the run before any output.
  const projects = new Map<string, ResolvedProject>();
  try {
    for (const file of files) projects.set(file, loadProjectOfFile(file, fs));
    if (stdin) projects.set(stdin.path, loadProject(stdin.path, fs));
  } catch (err) {
    if (err instanceof ProjectFileError) {
      io.stderr(`noiselint check: ${printableLine(`${shown(err.file)}: ${err.field ? `${err.field}: ` : ''}${err.detail}`)}\n`);
      return 2;
    }
    throw err;
  }

  const session = new WorkspaceSession({ fs, stableTree: true, showPath: shown, projects });
  // JSON is written file by file as the run goes; text and SARIF are written from the whole report.
  const stream =
    options.format === 'json' ? new JsonReportWriter(io.stdout, io.cwd, options.fixEdits ?? 'compact', options.jsonForm ?? 'compact') : null;
  const counted = emptySummary();
  const countedListed = emptySummary();
  const checkedConfig = new Set<string>();
  const isNamed = (file: string) => namedFiles.has(file) || file === stdin?.path;
  const sink: FileCheckSink = {
    notice,
    skipped: (path, reason) => {
      report.skipped.push({ path, reason });
      io.stderr(`noiselint check: ${printableLine(`${shown(path)}: ${reason}`)}\n`);
    },
    unchecked: (path, reason) => unchecked.push({ path, reason }),
    passedOver: () => void (report.passedOver = (report.passedOver ?? 0) + 1),
    config: (path) => checkedConfig.add(path),
    entry: (json, all, listed) => {
      addSummary(counted, all);
      addSummary(countedListed, listed);
      stream!.entry(json);
    },
    checked: (file, texts) => {
      for (const [p, t] of texts) report.otherTexts.set(p, t);
      report.files.push(file);
    },
  };
  const show = options.show;
  const fixEdits = options.fixEdits ?? 'compact';
  const jsonForm = options.jsonForm ?? 'compact';
  const checker = new FileChecker(session, (file) => projects.get(file)!, { cwd: io.cwd, stream: !!stream, fixEdits, jsonForm, show, isNamed });

  if (stdin) checker.check(stdin.path, decodeText(stdin.bytes), sink);
  // Progress goes to stderr when stderr is a terminal, whatever stdout is (a file, a pipe).
  const progress = !!io.stderrIsTTY && files.length >= PROGRESS_MIN_FILES;
  // Workers read the disk themselves: not for a run that reads standard input or another file system.
  const threads = io.workerScript && !stdin && diskFs === nodeFs ? workersFor(files.length, options.workers ?? availableParallelism()) : 1;
  const warnings: string[] = [];
  if (threads > 1) {
    const seen = new Set<string>();
    let done = 0;
    const init = { cwd: io.cwd, stream: !!stream, fixEdits, jsonForm, show };
    try {
      await checkInWorkers({
        script: io.workerScript!,
        threads,
        local: chunkChecker(session, (file) => projects.get(file)!, init),
        heapMb: workerHeapMb(totalmem(), threads),
        init,
        chunks: chunksOf(files, namedFiles),
        onChunk: (result, chunk) => {
          if (progress && result.events.some((e) => e[0] === 'skipped' || e[0] === 'notice')) io.stderr('\r\x1b[K');
          replay(result.events, sink);
          for (const w of result.warnings) {
            if (seen.has(w)) continue;
            seen.add(w);
            warnings.push(w);
          }
          done += chunk.files.length;
          if (progress) io.stderr(`\rchecking ${done}/${files.length}`);
        },
      });
    } catch (err) {
      if (progress) io.stderr('\r\x1b[K');
      io.stderr(`noiselint check: ${printableLine(err instanceof Error ? err.message : String(err))}\n`);
      return 2;
    }
  } else {
    let done = 0;
    for (const file of files) {
      if (progress) io.stderr(`\rchecking ${++done}/${files.length}`);
      const read = session.readText(file, projects.get(file)!);
      if (progress && !read.ok) io.stderr('\r\x1b[K');
      checker.check(file, read, sink);
    }
    warnings.push(...session.warnings);
  }
  if (progress) io.stderr('\r\x1b[K');
  for (const w of warnings) notice('warning', relativizeWarning(w, io.cwd));

  // Never green on nothing checked: every input must hold at least one diffusion config.
  if (!options.emptyOk) {
    const empty = (label: string, read: number) =>
      notice(
        'error',
        `${label}: no diffusion config found (${read === 0 ? 'no config files' : `${read} ${read === 1 ? 'file' : 'files'} read, none is a training or sampling config`}); --empty-ok accepts that`,
      );
    if (stdin && !checkedConfig.has(stdin.path)) empty(options.stdinPath ?? STDIN_NAME, 1);
    for (const input of inputs) {
      if (discoveryFailed.has(input)) continue;
      const own = filesOf.get(input) ?? [];
      if (!own.some((f) => checkedConfig.has(f))) empty(input, own.length);
    }
  }

  const listed = (s: Severity) => SEVERITIES.indexOf(s) <= SEVERITIES.indexOf(options.show);
  // Budgets and the summary count every finding; the view only decides what is listed.
  const all = stream ? counted : summarize(report.files);
  const budgets: BudgetResult[] = options.budgets.map((b) => {
    const found = atOrAbove(all, b.severity);
    return { ...b, found, exceeded: found > b.allowed };
  });
  let hidden: Summary = { errors: 0, warnings: 0, infos: 0, hints: 0 };
  if (stream) {
    hidden = {
      errors: 0,
      warnings: all.warnings - countedListed.warnings,
      infos: all.infos - countedListed.infos,
      hints: all.hints - countedListed.hints,
    };
  } else if (options.show !== 'hint') {
    report.files = report.files.map((f) => ({ ...f, findings: f.findings.filter((x) => listed(x.severity)) }));
    const shownCount = summarize(report.files);
    hidden = { errors: 0, warnings: all.warnings - shownCount.warnings, infos: all.infos - shownCount.infos, hints: all.hints - shownCount.hints };
  }
  report.outcome = { counted: all, hidden, show: options.show, budgets };

  if (stream) stream.finish(report);
  else if (options.format === 'sarif')
    io.stdout(formatSarif(report, { version: CHECK_TOOL_VERSION, rules: ALL_RULE_METAS, docsBase: options.docsBase }));
  else if (options.format === 'annotations') io.stdout(formatAnnotations(report));
  else io.stdout(formatText(report, { color: useColor(options.color, io) }));

  if (report.notices.some((n) => n.level === 'error')) return 2;
  return budgets.some((b) => b.exceeded) ? 1 : 0;
}

/** Pairing warnings name absolute paths; show them relative to the run's folder. */
function relativizeWarning(message: string, cwd: string): string {
  const prefix = `${cwd}/`;
  return message.split(prefix).join('');
}
