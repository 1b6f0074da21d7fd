/**
 * Code actions: one quick fix per fix of each noiselint diagnostic in the request, and
 * `source.fixAll.noiselint` applying every sampling-only fix that touches no comment and does not overlap another (computed on the
 * current text).
 *
 * A fix handed out here has been parsed in full: the result of each quick fix, and the combined
 * result of fix-all, must add no syntax error (analysis renders fixes without that parse; see
 * fix/render.ts). Verdicts are kept per analysed version, so a request costs a parse only for
 * fixes not asked about before.
 */
import {
  CodeActionKind,
  type CodeAction,
  type CodeActionParams,
  type Diagnostic,
  type TextEdit as LspTextEdit,
  type WorkspaceEdit,
} from 'vscode-languageserver/node';
import type { Finding, FixProposal, TextEdit } from '../base/findings';
import { editsAreApplicable, fixKeepsSyntax, originOf } from '../fix/applicable';
import { applyEdits } from '../fix/apply';
import type { SyntaxBase } from '../fix/syntaxCheck';
import { allowedFix, NO_CONSENT, selectFixes } from '../fix/select';
import { formatFromPath, parseText } from '../parse';
import type { SourceFormat } from '../parse/types';
import { FIX_ALL_KIND } from '../base/protocol';
import { DIAGNOSTIC_SOURCE, fixToData, isDiagnosticData, spanToRange, type FixData, type PositionMapper } from './convert';

export interface CurrentFindings {
  uri: string;
  version: number;
  text: string;
  mapper: PositionMapper;
  findings: Finding[];
  /** Format of the text; when absent, that of the parse behind the findings, else from the uri. */
  format?: SourceFormat;
}

const currentParses = new WeakMap<Finding[], SyntaxBase>();

/** The parse of the current text: the one the fixes were rendered from, else a parse made now. */
function currentParse(current: CurrentFindings): SyntaxBase {
  let parsed = currentParses.get(current.findings);
  if (parsed?.text === current.text) return parsed;
  parsed = undefined;
  for (const finding of current.findings) {
    for (const fix of finding.fixes) {
      const origin = originOf(fix);
      if (origin?.text === current.text) parsed ??= origin;
    }
  }
  const format = current.format ?? parsed?.format ?? formatFromPath(current.uri) ?? 'yaml';
  if (!parsed || parsed.format !== format) parsed = parseText(current.text, format, { maxFileBytes: Number.MAX_SAFE_INTEGER });
  currentParses.set(current.findings, parsed);
  return parsed;
}

/** The fix applied to the current text adds no syntax error (parsed once per fix). */
function applicable(fix: FixProposal, current: CurrentFindings): boolean {
  const origin = originOf(fix);
  const base = origin && origin.text === current.text && origin.format === (current.format ?? origin.format) ? origin : currentParse(current);
  return fix.edits.length > 0 && fixKeepsSyntax(fix, base);
}

/** LSP edits of a fix from a diagnostic's data, back to offsets in the current text. */
function dataEditsToSpans(fix: FixData, mapper: PositionMapper): TextEdit[] {
  return fix.edits.map((e) => ({ span: { start: mapper.offsetAt(e.range.start), end: mapper.offsetAt(e.range.end) }, newText: e.newText }));
}

/** A fix from a diagnostic's data (client input) applies to the current text and adds no syntax error. */
function dataFixApplicable(fix: FixData, current: CurrentFindings): boolean {
  try {
    return Array.isArray(fix?.edits) && editsAreApplicable(currentParse(current), dataEditsToSpans(fix, current.mapper));
  } catch {
    return false;
  }
}

/** True when a requested kind filter (`only`) lets `kind` through. */
export function kindRequested(only: string[] | undefined, kind: string): boolean {
  if (!only || only.length === 0) return true;
  return only.some((k) => k === kind || kind.startsWith(`${k}.`));
}

function sameRange(a: Diagnostic['range'], b: Diagnostic['range']): boolean {
  return a.start.line === b.start.line && a.start.character === b.start.character && a.end.line === b.end.line && a.end.character === b.end.character;
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
  if (finding) return finding.fixes.filter((f) => applicable(f, current)).map((f) => fixToData(current.mapper, f));
  if (isDiagnosticData(diagnostic.data) && diagnostic.data.version === current.version && diagnostic.data.rule === code) {
    return diagnostic.data.fixes.filter((f) => dataFixApplicable(f, current));
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

/** The edits fix-all applies: the shared selection policy (fix/select.ts) with no consent given, so only sampling-only fixes that keep every comment. */
export function collectSamplingOnlyEdits(findings: Finding[], text: string, accept: (fix: FixProposal) => boolean = () => true): TextEdit[] {
  const allow = allowedFix(NO_CONSENT);
  return selectFixes(findings, text.length, (fix) => allow(fix) && accept(fix)).edits;
}

const fixAllEdits = new WeakMap<Finding[], { text: string; edits: TextEdit[] }>();

/** The edits of fix-all on the current text, checked by one parse of the combined result. */
function checkedFixAllEdits(current: CurrentFindings): TextEdit[] {
  const known = fixAllEdits.get(current.findings);
  if (known?.text === current.text) return known.edits;
  let edits = collectSamplingOnlyEdits(current.findings, current.text);
  if (edits.length > 0 && !editsAreApplicable(currentParse(current), edits)) {
    // Some fix breaks the text: keep the fixes that are fine on their own, and check them together.
    edits = collectSamplingOnlyEdits(current.findings, current.text, (fix) => applicable(fix, current));
    if (edits.length > 0 && !editsAreApplicable(currentParse(current), edits)) edits = [];
  }
  fixAllEdits.set(current.findings, { text: current.text, edits });
  return edits;
}

export function fixAllAction(current: CurrentFindings, versionedEdits: boolean): CodeAction | null {
  const edits = checkedFixAllEdits(current);
  if (edits.length === 0) return null;
  // A last check that the edits apply cleanly to the current text (throws on overlap).
  applyEdits(current.text, edits);
  const lspEdits = edits.map((e) => ({ range: spanToRange(current.mapper, e.span), newText: e.newText }));
  return {
    title: 'noiselint: apply every sampling-only fix (the checkpoint stays valid)',
    kind: FIX_ALL_KIND,
    edit: workspaceEdit(current.uri, current.version, lspEdits, versionedEdits),
  };
}
