/** Core findings (offsets) to LSP diagnostics (positions), and back. */
import {
  DiagnosticSeverity,
  type Diagnostic,
  type DiagnosticRelatedInformation,
  type Position,
  type Range,
  type TextEdit as LspTextEdit,
} from 'vscode-languageserver/node';
import type { Finding, FixEffect, FixProposal, Severity } from '../base/findings';
import type { Span } from '../parse/types';

export const DIAGNOSTIC_SOURCE = 'noiselint';

export interface PositionMapper {
  positionAt(offset: number): Position;
  offsetAt(position: Position): number;
}

/** Where a related location in another file lives, for relatedInformation. */
export interface OtherFile {
  uri: string;
  mapper: PositionMapper;
}

export interface FixData {
  title: string;
  effect: FixEffect;
  touchesComment: boolean;
  preferred: boolean;
  edits: LspTextEdit[];
}

/** What a diagnostic carries for code actions: the fixes, computed on `version` of the text. */
export interface DiagnosticData {
  version: number;
  rule: string;
  documentIndex: number;
  fixes: FixData[];
}

const SEVERITY: Record<Severity, DiagnosticSeverity> = {
  error: DiagnosticSeverity.Error,
  warning: DiagnosticSeverity.Warning,
  info: DiagnosticSeverity.Information,
  hint: DiagnosticSeverity.Hint,
};

export function toLspSeverity(severity: Severity): DiagnosticSeverity {
  return SEVERITY[severity] ?? DiagnosticSeverity.Warning;
}

export function spanToRange(mapper: PositionMapper, span: Span): Range {
  return { start: mapper.positionAt(span.start), end: mapper.positionAt(span.end) };
}

export function fixToData(mapper: PositionMapper, fix: FixProposal): FixData {
  return {
    title: fix.title,
    effect: fix.effect,
    touchesComment: fix.touchesComment,
    preferred: fix.preferred,
    edits: fix.edits.map((e) => ({ range: spanToRange(mapper, e.span), newText: e.newText })),
  };
}

export interface ConvertContext {
  mapper: PositionMapper;
  version: number;
  /** Link of a rule's documentation page, or null for codes that are not rules. */
  docsUrl: (rule: string) => string | null;
  /** Resolves a related location's path (another file) to a uri and positions. */
  otherFile: (path: string) => OtherFile | null;
}

export function findingToDiagnostic(finding: Finding, ctx: ConvertContext, ownUri: string): Diagnostic {
  const related: DiagnosticRelatedInformation[] = [];
  for (const r of finding.related) {
    if (r.path === undefined) {
      related.push({ location: { uri: ownUri, range: spanToRange(ctx.mapper, r.span) }, message: r.message });
      continue;
    }
    const other = ctx.otherFile(r.path);
    if (other) related.push({ location: { uri: other.uri, range: spanToRange(other.mapper, r.span) }, message: r.message });
  }
  const data: DiagnosticData = {
    version: ctx.version,
    rule: finding.rule,
    documentIndex: finding.documentIndex,
    fixes: finding.fixes.map((f) => fixToData(ctx.mapper, f)),
  };
  const href = ctx.docsUrl(finding.rule);
  const diagnostic: Diagnostic = {
    range: spanToRange(ctx.mapper, finding.span),
    severity: toLspSeverity(finding.severity),
    source: DIAGNOSTIC_SOURCE,
    code: finding.rule,
    message: finding.message,
    data,
  };
  if (href) diagnostic.codeDescription = { href };
  if (related.length > 0) diagnostic.relatedInformation = related;
  return diagnostic;
}

export function isDiagnosticData(v: unknown): v is DiagnosticData {
  if (typeof v !== 'object' || v === null) return false;
  const d = v as Partial<DiagnosticData>;
  return typeof d.version === 'number' && typeof d.rule === 'string' && Array.isArray(d.fixes);
}
