/**
 * `check --format json`: the documented contract (docs/project-file.md, "JSON output").
 * Lines and characters are 0-based; characters count UTF-16 code units (as LSP does).
 */
import type { FixEffect } from '../../base/findings';
import { JSON_FORMAT_VERSION } from '../../base/version';
import { displayPath, Locator, summarize, type CheckReport, type Range } from './report';

export interface JsonEdit {
  range: Range;
  newText: string;
}

export interface JsonFix {
  title: string;
  effect: FixEffect;
  touchesComment: boolean;
  preferred: boolean;
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
  files: { path: string; findings: JsonFinding[] }[];
  /** Files that were found but not analysed (binary, not UTF-8, too large). */
  skipped: { path: string; reason: string }[];
  /** Every finding of the run, listed or not (`hidden`: how many `--show` left out). */
  /**
   * `files`: files checked and listed; `passedOver`: files whose text names no schedule or
   * step-count key, so they were not parsed (and are not listed).
   */
  summary: { errors: number; warnings: number; infos: number; hints: number; files: number; passedOver: number; hidden: number; budgets: JsonBudget[] };
}

export interface JsonBudget {
  severity: 'error' | 'warning' | 'info' | 'hint';
  allowed: number;
  found: number;
  exceeded: boolean;
}

export function toJson(report: CheckReport): JsonOutput {
  const locate = new Locator(report);
  const files = report.files.map((file) => ({
    path: displayPath(report.cwd, file.path),
    findings: file.findings.map((f): JsonFinding => ({
      rule: f.rule,
      severity: f.severity,
      message: f.message,
      range: locate.range(file.path, f.span),
      document: f.documentIndex,
      fixes: f.fixes.map((fix) => ({
        title: fix.title,
        effect: fix.effect,
        touchesComment: fix.touchesComment,
        preferred: fix.preferred,
        edits: fix.edits.map((e) => ({ range: locate.range(file.path, e.span), newText: e.newText })),
      })),
      related: f.related.map((r) => {
        const path = locate.resolvePath(file.path, r.path);
        return { path: displayPath(report.cwd, path), range: locate.range(path, r.span), message: r.message };
      }),
    })),
  }));
  return {
    formatVersion: JSON_FORMAT_VERSION,
    files,
    skipped: report.skipped.map((s) => ({ path: displayPath(report.cwd, s.path), reason: s.reason })),
    summary: summaryOf(report),
  };
}

function summaryOf(report: CheckReport): JsonOutput['summary'] {
  const outcome = report.outcome;
  const counted = outcome?.counted ?? summarize(report.files);
  const h = outcome?.hidden;
  return {
    ...counted,
    files: report.files.length,
    passedOver: report.passedOver ?? 0,
    hidden: h ? h.errors + h.warnings + h.infos + h.hints : 0,
    budgets: (outcome?.budgets ?? []).map((b) => ({ severity: b.severity, allowed: b.allowed, found: b.found, exceeded: b.exceeded })),
  };
}

export function formatJson(report: CheckReport): string {
  return `${JSON.stringify(toJson(report), null, 2)}\n`;
}
