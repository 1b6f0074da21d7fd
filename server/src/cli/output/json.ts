/**
 * `check --format json`: the documented contract (docs/project-file.md, "JSON output").
 * Lines and characters are 0-based; characters count UTF-16 code units (as LSP does).
 */
import { isAbsolute } from 'node:path';
import type { FixEffect } from '../../base/findings';
import { JSON_FORMAT_VERSION, VERSION } from '../../base/version';
import { displayPath, Locator, summarize, type CheckedFile, type CheckReport, type Range } from './report';

export interface JsonEdit {
  range: Range;
  newText: string;
}

export interface JsonFix {
  title: string;
  effect: FixEffect;
  touchesComment: boolean;
  preferred: boolean;
  /** `--fix-edits full`; the default writes CompactEdit arrays, `none` leaves the field out. */
  edits: JsonEdit[];
}

export interface JsonRelated {
  path: string;
  range: Range;
  message: string;
}

export interface JsonFinding {
  rule: string;
  severity: 'error' | 'warning' | 'info' | 'hint';
  message: string;
  range: Range;
  /** Index of the YAML document inside the file (0 for JSON). */
  document: number;
  fixes: JsonFix[];
  related: JsonRelated[];
}

export interface JsonOutput {
  /** JSON_FORMAT_VERSION: raised when a field is renamed or removed. */
  formatVersion: number;
  /** The tool that wrote the report. */
  tool: { name: 'noiselint'; version: string };
  files: { path: string; findings: JsonFinding[] }[];
  /** Files that were found but not analysed (binary, not UTF-8, too large). */
  skipped: { path: string; reason: string }[];
  /** Every path that could not be checked (skipped, unreadable, missing, of another type), with the reason. */
  unchecked: { path: string; reason: string }[];
  /** Every finding of the run, listed or not (`hidden`: how many `--show` left out). */
  /**
   * `files`: files checked and listed; `passedOver`: files whose text names no schedule or
   * step-count key, so they were not parsed (and are not listed).
   */
  summary: {
    errors: number;
    warnings: number;
    infos: number;
    hints: number;
    files: number;
    passedOver: number;
    hidden: number;
    budgets: JsonBudget[];
  };
}

export interface JsonBudget {
  severity: 'error' | 'warning' | 'info' | 'hint';
  allowed: number;
  found: number;
  exceeded: boolean;
}

/**
 * How fix edits are written: `compact` (default) as `[startLine, startCharacter, endLine,
 * endCharacter, newText]` arrays, `full` as `{ range, newText }` objects, `none` left out (the
 * fix's title, effect and flags stay).
 */
export type EditForm = 'compact' | 'full' | 'none';
export const EDIT_FORMS: readonly EditForm[] = ['compact', 'full', 'none'];

export type CompactEdit = [number, number, number, number, string];

/**
 * How findings are written: `compact` (default) with ranges as `[startLine, startCharacter,
 * endLine, endCharacter]` arrays and every field at its default left out (`document` 0, empty
 * `fixes` and `related`, `effect` sampling-only, `touchesComment` false, `preferred` true); `full`
 * with every field and
 * ranges as `{ start, end }` objects (the form of format version 3).
 */
export type JsonForm = 'compact' | 'full';
export const JSON_FORMS: readonly JsonForm[] = ['compact', 'full'];

export type CompactRange = [number, number, number, number];

const rangeArray = (r: Range): CompactRange => [r.start.line, r.start.character, r.end.line, r.end.character];

export interface JsonFileEntry {
  path: string;
  findings: JsonFinding[];
}

/** One checked file as the contract writes it. */
export function fileEntry(file: CheckedFile, locate: Locator, cwd: string, edits: EditForm = 'full', form: JsonForm = 'full'): JsonFileEntry {
  if (form === 'compact') return compactEntry(file, locate, cwd, edits) as unknown as JsonFileEntry;
  return {
    path: displayPath(cwd, file.path),
    findings: file.findings.map((f): JsonFinding => ({
      rule: f.rule,
      severity: f.severity,
      message: f.message,
      range: locate.range(file.path, f.span),
      document: f.documentIndex,
      fixes: f.fixes.map((fix) => {
        const out: JsonFix = { title: fix.title, effect: fix.effect, touchesComment: fix.touchesComment, preferred: fix.preferred, edits: [] };
        if (edits === 'none') delete (out as Partial<JsonFix>).edits;
        else if (edits === 'full') out.edits = fix.edits.map((e) => ({ range: locate.range(file.path, e.span), newText: e.newText }));
        else
          (out as unknown as { edits: CompactEdit[] }).edits = fix.edits.map((e) => {
            const r = locate.range(file.path, e.span);
            return [r.start.line, r.start.character, r.end.line, r.end.character, e.newText];
          });
        return out;
      }),
      related: f.related.map((r) => {
        const path = locate.resolvePath(file.path, r.path);
        return { path: displayPath(cwd, path), range: locate.range(path, r.span), message: r.message };
      }),
    })),
  };
}

/** The compact form of one file's entry (JsonForm). */
function compactEntry(file: CheckedFile, locate: Locator, cwd: string, edits: EditForm): { path: string; findings: Record<string, unknown>[] } {
  return {
    path: displayPath(cwd, file.path),
    findings: file.findings.map((f) => {
      const out: Record<string, unknown> = {
        rule: f.rule,
        severity: f.severity,
        message: f.message,
        range: rangeArray(locate.range(file.path, f.span)),
      };
      if (f.documentIndex !== 0) out.document = f.documentIndex;
      if (f.fixes.length) {
        out.fixes = f.fixes.map((fix) => {
          // Only the effect that matters to a checkpoint is written: a fix without one changes sampling only.
          const o: Record<string, unknown> = { title: fix.title };
          if (fix.effect !== 'sampling-only') o.effect = fix.effect;
          if (fix.touchesComment) o.touchesComment = true;
          if (!fix.preferred) o.preferred = false;
          if (edits === 'full') o.edits = fix.edits.map((e) => ({ range: locate.range(file.path, e.span), newText: e.newText }));
          else if (edits === 'compact') o.edits = fix.edits.map((e): CompactEdit => [...rangeArray(locate.range(file.path, e.span)), e.newText]);
          return o;
        });
      }
      if (f.related.length) {
        out.related = f.related.map((r) => {
          const path = locate.resolvePath(file.path, r.path);
          return { path: displayPath(cwd, path), range: rangeArray(locate.range(path, r.span)), message: r.message };
        });
      }
      return out;
    }),
  };
}

/** The whole report at once (small runs, tests); `check` streams it with JsonReportWriter. */
export function toJson(report: CheckReport, edits: EditForm = 'full', form: JsonForm = 'full'): JsonOutput {
  const locate = new Locator(report);
  return {
    formatVersion: JSON_FORMAT_VERSION,
    tool: { name: 'noiselint', version: VERSION },
    files: report.files.map((file) => fileEntry(file, locate, report.cwd, edits, form)),
    unchecked: uncheckedOf(report),
    skipped: report.skipped.map((s) => ({ path: displayPath(report.cwd, s.path), reason: s.reason })),
    summary: summaryOf(report),
  };
}

/** Every path the run could not check, relative to the run's folder (inputs as given). */
function uncheckedOf(report: CheckReport): { path: string; reason: string }[] {
  return (report.unchecked ?? report.skipped).map((s) => ({ path: isAbsolute(s.path) ? displayPath(report.cwd, s.path) : s.path, reason: s.reason }));
}

function summaryOf(report: CheckReport, listedFiles = report.files.length): JsonOutput['summary'] {
  const outcome = report.outcome;
  const counted = outcome?.counted ?? summarize(report.files);
  const h = outcome?.hidden;
  return {
    ...counted,
    files: listedFiles,
    passedOver: report.passedOver ?? 0,
    hidden: h ? h.errors + h.warnings + h.infos + h.hints : 0,
    budgets: (outcome?.budgets ?? []).map((b) => ({ severity: b.severity, allowed: b.allowed, found: b.found, exceeded: b.exceeded })),
  };
}

export function formatJson(report: CheckReport, edits: EditForm = 'compact', form: JsonForm = 'compact'): string {
  return `${JSON.stringify(toJson(report, edits, form))}\n`;
}

/** One file's entry of the streamed report, serialised; `otherTexts` are the texts its related locations point into. */
export function fileEntryText(file: CheckedFile, otherTexts: ReadonlyMap<string, string>, cwd: string, edits: EditForm, form: JsonForm): string {
  const locate = new Locator({ cwd, files: [file], skipped: [], otherTexts: otherTexts as Map<string, string>, notices: [] });
  return JSON.stringify(fileEntry(file, locate, cwd, edits, form));
}

/** Text is handed to the output in pieces of about this size. */
const FLUSH_CHARS = 64 * 1024;

/**
 * The check report written as it goes: one file entry at a time, compact separators, nothing
 * kept of a file once it is written (memory stays flat in the number of files, and no string
 * ever holds the whole report). The result is the same document `formatJson` gives.
 */
export class JsonReportWriter {
  private buffer = '';
  private files = 0;

  constructor(
    private readonly write: (text: string) => void,
    private readonly cwd: string,
    private readonly edits: EditForm = 'compact',
    private readonly form: JsonForm = 'compact',
  ) {
    this.buffer = `{"formatVersion":${JSON_FORMAT_VERSION},"tool":${JSON.stringify({ name: 'noiselint', version: VERSION })},"files":[`;
  }

  /** Writes one checked file; `otherTexts` are the texts its related locations point into. */
  file(file: CheckedFile, otherTexts: ReadonlyMap<string, string>): void {
    this.entry(fileEntryText(file, otherTexts, this.cwd, this.edits, this.form));
  }

  /** Writes one file entry serialised by `fileEntryText` (a worker thread's). */
  entry(json: string): void {
    this.buffer += (this.files++ === 0 ? '' : ',') + json;
    if (this.buffer.length >= FLUSH_CHARS) this.flush();
  }

  /** Writes the skipped files and the summary (the report's `files` are not read again). */
  finish(report: CheckReport): void {
    const skipped = report.skipped.map((s) => ({ path: displayPath(this.cwd, s.path), reason: s.reason }));
    this.buffer += `],"unchecked":${JSON.stringify(uncheckedOf(report))},"skipped":${JSON.stringify(skipped)},"summary":${JSON.stringify(summaryOf(report, this.files))}}\n`;
    this.flush();
  }

  private flush(): void {
    if (this.buffer.length) this.write(this.buffer);
    this.buffer = '';
  }
}
