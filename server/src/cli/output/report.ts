/**
 * What a `check` run produced, in the form every output format reads: findings per file, plus the
 * text of every file a location can point into (so offsets become lines and columns).
 */
import { isAbsolute, relative, resolve, sep } from 'node:path';
import { SEVERITIES, type Finding, type Severity } from '../../base/findings';
import { LineIndex, type Position } from '../../parse/lineIndex';
import type { Span } from '../../parse/types';

export interface CheckedFile {
  /** Absolute path. */
  path: string;
  text: string;
  findings: Finding[];
  isDiffusionConfig: boolean;
}

export interface SkippedFile {
  path: string;
  /** One line, e.g. 'skipped: looks binary (contains NUL bytes)'. */
  reason: string;
}

export interface CheckReport {
  cwd: string;
  files: CheckedFile[];
  skipped: SkippedFile[];
  /**
   * Every path the run could not check, with the reason: skipped files, unreadable ones, inputs
   * that do not exist or are of another type. Paths are absolute, or an input as given.
   */
  unchecked?: SkippedFile[];
  /** Text of other files related locations point into (paired files), by absolute path. */
  otherTexts: Map<string, string>;
  /** One-line I/O errors and warnings of the run (also written to stderr). */
  notices: { level: 'error' | 'warning'; message: string }[];
  /**
   * Files read but passed over before parsing: their text names no schedule or step-count key,
   * so they cannot be diffusion configs (engine/prefilter.ts). Not listed in `files`.
   */
  passedOver?: number;
  /** What `check` counted and judged; `files` may list fewer findings (its `--show` view). */
  outcome?: CheckOutcome;
}

export interface BudgetResult {
  severity: Severity;
  /** Findings at or above `severity` that may pass. */
  allowed: number;
  /** Given on the command line (not the built-in `error=0`). */
  explicit: boolean;
  found: number;
  exceeded: boolean;
}

export interface CheckOutcome {
  /** Every finding of the run, listed or not. */
  counted: Summary;
  /** Findings fainter than `show`, counted but not listed. */
  hidden: Summary;
  show: Severity;
  budgets: BudgetResult[];
}

export interface Summary {
  errors: number;
  warnings: number;
  infos: number;
  hints: number;
}

export function summarize(files: readonly CheckedFile[]): Summary {
  const s: Summary = { errors: 0, warnings: 0, infos: 0, hints: 0 };
  const key: Record<Severity, keyof Summary> = { error: 'errors', warning: 'warnings', info: 'infos', hint: 'hints' };
  for (const f of files) for (const finding of f.findings) s[key[finding.severity]]++;
  return s;
}

/** Findings at `severity` or more severe. */
export function atOrAbove(s: Summary, severity: Severity): number {
  const order: (keyof Summary)[] = ['errors', 'warnings', 'infos', 'hints'];
  return order.slice(0, SEVERITIES.indexOf(severity) + 1).reduce((n, k) => n + s[k], 0);
}

/** Path relative to the run's folder, with forward slashes (absolute when it is on another drive). */
export function displayPath(cwd: string, path: string): string {
  // The usual case, a discovered file below the run's folder, without path.relative's two resolves.
  if (sep === '/' && plainlyBelow(cwd, path)) return path.slice(cwd.length + 1);
  const rel = relative(cwd, path);
  const shown = rel === '' ? '.' : isAbsolute(rel) ? path : rel;
  return sep === '/' ? shown : shown.split(sep).join('/');
}

/** Segments from `from` on are all real names: none empty, `.` or `..` (the path is already normal). */
function normalFrom(path: string, from: number): boolean {
  let start = from;
  for (let i = from; i <= path.length; i++) {
    if (i < path.length && path.charCodeAt(i) !== 47 /* / */) continue;
    const n = i - start;
    if (n === 0 || (n === 1 && path.charCodeAt(start) === 46) || (n === 2 && path.charCodeAt(start) === 46 && path.charCodeAt(start + 1) === 46))
      return false;
    start = i + 1;
  }
  return true;
}

let lastCwd = '';
let lastCwdNormal = false;

/** `path` is `cwd/rest` with both normal and `cwd` absolute (not the root): relative(cwd, path) is `rest`. */
function plainlyBelow(cwd: string, path: string): boolean {
  if (path.length <= cwd.length + 1 || path.charCodeAt(cwd.length) !== 47 || !path.startsWith(cwd)) return false;
  if (cwd !== lastCwd) {
    lastCwd = cwd;
    lastCwdNormal = cwd.length > 1 && cwd.charCodeAt(0) === 47 && normalFrom(cwd, 1);
  }
  return lastCwdNormal && normalFrom(path, cwd.length + 1);
}

export interface Range {
  start: Position;
  end: Position;
}

/** Offsets -> 0-based positions, with one line index per file text. */
export class Locator {
  private readonly indexes = new Map<string, LineIndex>();
  private readonly texts = new Map<string, string>();
  constructor(private readonly report: CheckReport) {
    for (const f of report.files) if (f.text !== undefined && !this.texts.has(f.path)) this.texts.set(f.path, f.text);
  }

  /** The absolute path of a related location (absent path: the finding's own file). */
  resolvePath(filePath: string, relatedPath: string | undefined): string {
    if (!relatedPath) return filePath;
    return isAbsolute(relatedPath) ? relatedPath : resolve(this.report.cwd, relatedPath);
  }

  textOf(path: string): string | undefined {
    return this.texts.get(path) ?? this.report.otherTexts.get(path);
  }

  range(path: string, span: Span): Range {
    let index = this.indexes.get(path);
    if (!index) {
      index = new LineIndex(this.textOf(path) ?? '');
      this.indexes.set(path, index);
    }
    return { start: index.positionAt(span.start), end: index.positionAt(span.end) };
  }
}
