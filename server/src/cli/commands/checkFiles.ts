/**
 * The check of one file, shared by the run's own thread and its worker threads (checkWorkers.ts):
 * what happens to a file (unreadable, passed over, checked) goes to a sink, so a worker can record
 * it and the main thread replay it in file order, and the report is the same either way.
 */
import { dirname } from 'node:path';
import { findingsAsData, type FileResult } from '../../engine/api';
import { SEVERITIES, type Severity } from '../../base/findings';
import type { TextReadResult } from '../../workspace/fs';
import type { ResolvedProject } from '../../workspace/project';
import type { Pairing, WorkspaceSession } from '../../workspace/session';
import { fileEntryText, type EditForm, type JsonForm } from '../output/json';
import { displayPath, type CheckedFile, type Summary } from '../output/report';

/** What the check of a file produced, in the order it happened. */
export interface FileCheckSink {
  /** A one-line error or warning of the run (the report's notices, and stderr). */
  notice(level: 'error' | 'warning', message: string): void;
  /** A file skipped while walking folders: a line on stderr and an entry in `skipped`. */
  skipped(path: string, reason: string): void;
  /** A path that could not be checked. */
  unchecked(path: string, reason: string): void;
  /** A text that names no schedule or step-count key (not parsed). */
  passedOver(): void;
  /** The file holds a diffusion config. */
  config(path: string): void;
  /** JSON report: the file's entry, serialised; `counted` covers every finding, `listed` those in the entry. */
  entry(json: string, counted: Summary, listed: Summary): void;
  /** Other formats: the checked file and the texts its related locations point into. */
  checked(file: CheckedFile, otherTexts: Map<string, string>): void;
}

export interface FileCheckOptions {
  cwd: string;
  /** The JSON report is streamed (entries are serialised as files are checked). */
  stream: boolean;
  fixEdits: EditForm;
  /** How findings are written in the JSON report. */
  jsonForm: JsonForm;
  /** The faintest severity listed. */
  show: Severity;
  /** A file named on the command line (or standard input): a read failure is an error of the run. */
  isNamed: (path: string) => boolean;
}

export const emptySummary = (): Summary => ({ errors: 0, warnings: 0, infos: 0, hints: 0 });

export function addCounts(s: Summary, findings: readonly { severity: Severity }[]): void {
  for (const f of findings) {
    if (f.severity === 'error') s.errors++;
    else if (f.severity === 'warning') s.warnings++;
    else if (f.severity === 'info') s.infos++;
    else s.hints++;
  }
}

export function addSummary(into: Summary, s: Summary): void {
  into.errors += s.errors;
  into.warnings += s.warnings;
  into.infos += s.infos;
  into.hints += s.hints;
}

export class FileChecker {
  constructor(
    private readonly session: WorkspaceSession,
    private readonly projectOf: (path: string) => ResolvedProject,
    private readonly options: FileCheckOptions,
  ) {}

  private listed(s: Severity): boolean {
    return SEVERITIES.indexOf(s) <= SEVERITIES.indexOf(this.options.show);
  }

  /** Reads and checks one discovered file. */
  checkFile(file: string, sink: FileCheckSink): void {
    this.check(file, this.session.readText(file, this.projectOf(file)), sink);
  }

  check(file: string, read: TextReadResult, sink: FileCheckSink): void {
    // Files come folder by folder: what the session read for the folder before is let go.
    this.session.enterFolder(dirname(file));
    const shown = displayPath(this.options.cwd, file);
    const project = this.projectOf(file);
    if (!read.ok) {
      sink.unchecked(file, read.problem);
      if (read.kind === 'io' || this.options.isNamed(file)) sink.notice('error', `${shown}: ${read.problem}`);
      else sink.skipped(file, read.problem);
      return;
    }
    // A text that names no schedule or step-count key cannot hold a finding: not parsed at all.
    if (!this.session.mayBeConfig(file, read.text, project)) {
      sink.passedOver();
      return;
    }
    let result: FileResult;
    let pairing: Pairing;
    try {
      // Pairing reads the folder's files (their roles); the file's own check reuses that reading.
      pairing = this.session.partnersOf(file, project);
      result = this.session.analyze(file, read.text, { project, partners: pairing.partners, pairRole: pairing.pairRole });
    } catch (err) {
      // The core never throws by contract; if it does, one file's failure must not end the run.
      sink.notice('error', `${shown}: internal error while checking: ${err instanceof Error ? err.message.split('\n')[0] : String(err)}`);
      sink.unchecked(file, 'internal error while checking');
      return;
    }
    if (result.isDiffusionConfig) sink.config(file);
    // As data: the report outlives every file's tree.
    const checked: CheckedFile = {
      path: file,
      text: read.text,
      findings: findingsAsData(result.findings),
      isDiffusionConfig: result.isDiffusionConfig,
    };
    if (!this.options.stream) {
      sink.checked(checked, pairing.texts);
      return;
    }
    const counted = emptySummary();
    addCounts(counted, checked.findings);
    if (this.options.show !== 'hint') checked.findings = checked.findings.filter((x) => this.listed(x.severity));
    const listed = emptySummary();
    addCounts(listed, checked.findings);
    sink.entry(fileEntryText(checked, pairing.texts, this.options.cwd, this.options.fixEdits, this.options.jsonForm), counted, listed);
  }
}
