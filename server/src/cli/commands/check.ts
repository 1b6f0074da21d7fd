/**
 * `noiselint check [paths|globs...] [--format text|json|sarif] [--max-warnings N] [--quiet]`
 *
 * Exit codes: 0 no errors and at most N warnings; 1 otherwise; 2 bad arguments, an invalid project
 * file, or a file or folder that could not be read (the others are still checked).
 */
import { parseArgs } from 'node:util';
import { findingsAsData, type FileResult } from '../../engine/api';
import { ALL_RULE_METAS } from '../../rules';
import { discoverFiles } from '../../workspace/discover';
import { nodeFs, type WorkspaceFs } from '../../workspace/fs';
import { loadProject, ProjectFileError, type ResolvedProject } from '../../workspace/project';
import { WorkspaceSession } from '../../workspace/session';

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

  const session = new WorkspaceSession({ fs, stableTree: true, showPath: shown, projects });
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
