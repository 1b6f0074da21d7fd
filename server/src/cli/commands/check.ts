/**
 * `noiselint check [paths|globs...] [--format text|json|sarif] [--show <severity>] [--budget <severity>=<N>...]`
 *
 * `--show` is the faintest severity listed (the others are still counted); each `--budget` lets
 * at most N findings at or above a severity pass. Without an `error=` budget, no error may pass.
 *
 * Exit codes: 0 the findings fit every budget; 1 a budget is exceeded; 2 the run could not look at
 * everything it was given (bad arguments, an invalid project file, a file or folder that could not
 * be read; the rest is still checked and reported).
 */
import { parseArgs } from 'node:util';
import { findingsAsData, type FileResult } from '../../engine/api';
import { ALL_RULE_METAS } from '../../rules';
import { discoverFiles } from '../../workspace/discover';
import { nodeFs, type WorkspaceFs } from '../../workspace/fs';
import { loadProject, ProjectFileError, type ResolvedProject } from '../../workspace/project';
import { WorkspaceSession, type Pairing } from '../../workspace/session';
import { mayBeDiffusionConfig } from '../../engine/prefilter';

import { UsageError, type CliIO } from '../io';
import { EDIT_FORMS, JsonReportWriter, type EditForm } from '../output/json';
import { atOrAbove, displayPath, summarize, type BudgetResult, type CheckReport, type Summary } from '../output/report';
import { SEVERITIES, type Severity } from '../../base/findings';
import { printableLine } from '../output/printable';
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
  /** The faintest severity listed; fainter findings are counted but not listed. */
  show: Severity;
  /** At most `allowed` findings at or above `severity` may pass. */
  budgets: Budget[];
  /** How the JSON report writes fix edits (default compact). */
  fixEdits?: EditForm;
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
  return { severity: severityArg('--budget', m[1]), allowed: Number(m[2]), explicit: true };
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
        show: { type: 'string', default: 'hint' },
        budget: { type: 'string', multiple: true, default: [] },
        'fix-edits': { type: 'string', default: 'compact' },
      },
    });
  } catch (err) {
    throw new UsageError(err instanceof Error ? err.message.split('\n')[0] : String(err));
  }
  const format = parsed.values.format;
  if (format !== 'text' && format !== 'json' && format !== 'sarif') {
    throw new UsageError(`--format must be text, json or sarif, not "${format}"`);
  }
  const show = severityArg('--show', parsed.values.show ?? 'hint');
  const budgets = (parsed.values.budget ?? []).map(budgetArg);
  for (const [i, b] of budgets.entries()) {
    if (budgets.findIndex((o) => o.severity === b.severity) !== i) throw new UsageError(`--budget ${b.severity}= is given twice`);
  }
  if (!budgets.some((b) => b.severity === 'error')) budgets.unshift({ severity: 'error', allowed: 0, explicit: false });
  const fixEdits = parsed.values['fix-edits'] as EditForm;
  if (!EDIT_FORMS.includes(fixEdits)) throw new UsageError(`--fix-edits must be ${EDIT_FORMS.join(', ')}, not "${fixEdits}"`);
  return { inputs: parsed.positionals, format, show, budgets, fixEdits };
}

export async function runCheck(args: string[], io: CliIO): Promise<number> {
  const options = parseCheckArgs(args);
  return check(options, io);
}

export async function check(options: CheckOptions, io: CliIO, fs: WorkspaceFs = nodeFs): Promise<number> {
  const report: CheckReport = { cwd: io.cwd, files: [], skipped: [], otherTexts: new Map(), notices: [] };
  const notice = (level: 'error' | 'warning', message: string) => {
    report.notices.push({ level, message });
    io.stderr(`noiselint check: ${level === 'warning' ? 'warning: ' : ''}${printableLine(message)}\n`);
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
      io.stderr(`noiselint check: ${printableLine(`${shown(err.file)}: ${err.field ? `${err.field}: ` : ''}${err.detail}`)}\n`);
      return 2;
    }
    throw err;
  }

  const session = new WorkspaceSession({ fs, stableTree: true, showPath: shown, projects });
  const listed = (s: Severity) => SEVERITIES.indexOf(s) <= SEVERITIES.indexOf(options.show);
  // JSON is written file by file as the run goes; text and SARIF are written from the whole report.
  const stream = options.format === 'json' ? new JsonReportWriter(io.stdout, io.cwd, options.fixEdits ?? 'compact') : null;
  const counted: Summary = { errors: 0, warnings: 0, infos: 0, hints: 0 };
  const countedListed: Summary = { errors: 0, warnings: 0, infos: 0, hints: 0 };
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
        io.stderr(`noiselint check: ${printableLine(`${shown(file)}: ${read.problem}`)}\n`);
      }
      continue;
    }
    // A text that names no schedule or step-count key cannot hold a finding: not parsed at all.
    if (!mayBeDiffusionConfig(read.text, project.aliases)) {
      report.passedOver = (report.passedOver ?? 0) + 1;
      continue;
    }
    let result: FileResult;
    let pairing: Pairing;
    try {
      // Pairing reads the folder's files (their roles); the file's own check reuses that reading.
      pairing = session.partnersOf(file, project);
      result = session.analyze(file, read.text, { project, partners: pairing.partners, pairRole: pairing.pairRole });
    } catch (err) {
      // The core never throws by contract; if it does, one file's failure must not end the run.
      notice('error', `${shown(file)}: internal error while checking: ${err instanceof Error ? err.message.split('\n')[0] : String(err)}`);
      continue;
    }
    // As data: the report outlives every file's tree.
    const checked = { path: file, text: read.text, findings: findingsAsData(result.findings), isDiffusionConfig: result.isDiffusionConfig };
    if (stream) {
      addCounts(counted, checked.findings);
      if (options.show !== 'hint') checked.findings = checked.findings.filter((x) => listed(x.severity));
      addCounts(countedListed, checked.findings);
      stream.file(checked, pairing.texts);
    } else {
      for (const [p, t] of pairing.texts) report.otherTexts.set(p, t);
      report.files.push(checked);
    }
  }
  if (progress) io.stderr('\r\x1b[K');
  for (const w of session.warnings) notice('warning', relativizeWarning(w, io.cwd));

  // Budgets and the summary count every finding; the view only decides what is listed.
  const all = stream ? counted : summarize(report.files);
  const budgets: BudgetResult[] = options.budgets.map((b) => {
    const found = atOrAbove(all, b.severity);
    return { ...b, found, exceeded: found > b.allowed };
  });
  let hidden: Summary = { errors: 0, warnings: 0, infos: 0, hints: 0 };
  if (stream) {
    hidden = { errors: 0, warnings: all.warnings - countedListed.warnings, infos: all.infos - countedListed.infos, hints: all.hints - countedListed.hints };
  } else if (options.show !== 'hint') {
    report.files = report.files.map((f) => ({ ...f, findings: f.findings.filter((x) => listed(x.severity)) }));
    const shownCount = summarize(report.files);
    hidden = { errors: 0, warnings: all.warnings - shownCount.warnings, infos: all.infos - shownCount.infos, hints: all.hints - shownCount.hints };
  }
  report.outcome = { counted: all, hidden, show: options.show, budgets };

  if (stream) stream.finish(report);
  else if (options.format === 'sarif') io.stdout(formatSarif(report, { version: CHECK_TOOL_VERSION, rules: ALL_RULE_METAS }));
  else io.stdout(formatText(report, { color: io.isTTY && !io.env.NO_COLOR }));

  if (report.notices.some((n) => n.level === 'error')) return 2;
  return budgets.some((b) => b.exceeded) ? 1 : 0;
}

function addCounts(s: Summary, findings: readonly { severity: Severity }[]): void {
  for (const f of findings) {
    if (f.severity === 'error') s.errors++;
    else if (f.severity === 'warning') s.warnings++;
    else if (f.severity === 'info') s.infos++;
    else s.hints++;
  }
}

/** Pairing warnings name absolute paths; show them relative to the run's folder. */
function relativizeWarning(message: string, cwd: string): string {
  const prefix = `${cwd}/`;
  return message.split(prefix).join('');
}
