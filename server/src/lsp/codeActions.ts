/**
 * Code actions: one quick fix per fix of each noiselint diagnostic in the request, and
 * `source.fixAll.noiselint` applying every safe fix that does not overlap another (computed on the
 * current text).
 */
import {
  CodeActionKind,
  type CodeAction,
  type CodeActionParams,
  type Diagnostic,
  type TextEdit as LspTextEdit,
  type WorkspaceEdit,
} from 'vscode-languageserver/node';
import type { Finding, FixProposal, TextEdit } from '../core/findings';
import { anyConflict, applyEdits, sortEdits } from '../fix/apply';
import { FIX_ALL_KIND } from '../protocol';
import { DIAGNOSTIC_SOURCE, fixToData, isDiagnosticData, spanToRange, type FixData, type PositionMapper } from './convert';

export interface CurrentFindings {
  uri: string;
  version: number;
  text: string;
  mapper: PositionMapper;
  findings: Finding[];
}

/** True when a requested kind filter (`only`) lets `kind` through. */
export function kindRequested(only: string[] | undefined, kind: string): boolean {
  if (!only || only.length === 0) return true;
  return only.some((k) => k === kind || kind.startsWith(`${k}.`));
}

function sameRange(a: Diagnostic['range'], b: Diagnostic['range']): boolean {
  return (
    a.start.line === b.start.line && a.start.character === b.start.character && a.end.line === b.end.line && a.end.character === b.end.character
  );
}

function workspaceEdit(uri: string, version: number, edits: LspTextEdit[], versioned: boolean): WorkspaceEdit {
  if (versioned) return { documentChanges: [{ textDocument: { uri, version }, edits }] };
  return { changes: { [uri]: edits } };
}

/** The fixes of the current finding behind `diagnostic` (same rule, same range), else its data if still current. */
function fixesFor(diagnostic: Diagnostic, current: CurrentFindings): FixData[] {
  const code = typeof diagnostic.code === 'string' ? diagnostic.code : undefined;
  if (!code) return [];
  const finding = current.findings.find((f) => f.rule === code && sameRange(spanToRange(current.mapper, f.span), diagnostic.range));
  if (finding) return finding.fixes.map((f) => fixToData(current.mapper, f));
  if (isDiagnosticData(diagnostic.data) && diagnostic.data.version === current.version && diagnostic.data.rule === code) {
    return diagnostic.data.fixes;
  }
  return [];
}

export function quickFixes(params: CodeActionParams, current: CurrentFindings, versionedEdits: boolean): CodeAction[] {
  const actions: CodeAction[] = [];
  const diagnostics = Array.isArray(params.context?.diagnostics) ? params.context.diagnostics : [];
  for (const diagnostic of diagnostics) {
    if (diagnostic?.source !== DIAGNOSTIC_SOURCE || typeof diagnostic.code !== 'string') continue;
    for (const fix of fixesFor(diagnostic, current)) {
      if (fix.edits.length === 0) continue;
      const action: CodeAction = {
        title: fix.title,
        kind: CodeActionKind.QuickFix,
        diagnostics: [diagnostic],
        edit: workspaceEdit(current.uri, current.version, fix.edits, versionedEdits),
      };
      if (fix.preferred) action.isPreferred = true;
      actions.push(action);
    }
  }
  return actions;
}

function pickSafeFix(finding: Finding): FixProposal | undefined {
  const safe = finding.fixes.filter((f) => f.safety === 'safe' && f.edits.length > 0);
  return safe.find((f) => f.preferred) ?? safe[0];
}

/** Every safe fix, in position order, skipping any that would overlap one already taken. */
export function collectSafeEdits(findings: Finding[], text: string): TextEdit[] {
  const taken: TextEdit[] = [];
  const ordered = [...findings].sort((a, b) => a.span.start - b.span.start);
  for (const finding of ordered) {
    const fix = pickSafeFix(finding);
    if (!fix) continue;
    const own = sortEdits(fix.edits);
    if (own.some((e, i) => i > 0 && anyConflict([e], own.slice(0, i)))) continue;
    if (own.some((e) => e.span.start < 0 || e.span.end > text.length || e.span.end < e.span.start)) continue;
    if (anyConflict(own, taken)) continue;
    taken.push(...own);
  }
  return sortEdits(taken);
}

export function fixAllAction(current: CurrentFindings, versionedEdits: boolean): CodeAction | null {
  const edits = collectSafeEdits(current.findings, current.text);
  if (edits.length === 0) return null;
  // A last check that the edits apply cleanly to the current text (throws on overlap).
  applyEdits(current.text, edits);
  const lspEdits = edits.map((e) => ({ range: spanToRange(current.mapper, e.span), newText: e.newText }));
  return {
    title: 'Apply all safe noiselint fixes',
    kind: FIX_ALL_KIND,
    edit: workspaceEdit(current.uri, current.version, lspEdits, versionedEdits),
  };
}
