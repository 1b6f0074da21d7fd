/**
 * The request handlers: each turns an LSP request into calls to the protocol-free views
 * (views/) over an open document's current analysis, and their answer into LSP types.
 */
import {
  CodeActionKind,
  ErrorCodes,
  LSPErrorCodes,
  ResponseError,
  type CancellationToken,
  type CodeAction,
  type CodeActionParams,
  type CodeLens,
  type CodeLensParams,
  type DocumentDiagnosticParams,
  type DocumentDiagnosticReport,
  type Hover,
  type HoverParams,
  type InlayHint,
  type InlayHintParams,
} from 'vscode-languageserver/node';
import type { Finding } from '../base/findings';
import { FIX_ALL_KIND, SHOW_SCHEDULE_COMMAND, type UriParams } from '../base/protocol';
import type { FileReading } from '../engine/api';
import type { Concept } from '../fields/concepts';
import { summaryFor } from '../views/documentSummary';
import { formatExplainText } from '../views/explainFormat';
import { firstFieldOf } from '../views/fieldAt';
import { hoverAt } from '../views/hover';
import { hoverImages } from './hoverImages';
import type { EditorSettings } from './settings';
import { inlineHintsFor } from '../views/inlayHints';
import { plotDataFor } from '../views/plotData';
import type { Capabilities } from './capabilities';
import { fixAllAction, kindRequested, quickFixes, type CurrentFindings } from './codeActions';
import { spanToRange } from './convert';
import type { Analyzed, OpenDocument, OpenDocuments } from './documents';
import { isPosition, requireUri } from './util';
import { runCodeActions, type RunContext } from './runAction';

/** Schedule fields, in the order the "Show noise schedule" lens looks for them. */
const SCHEDULE_FIELDS: readonly Concept[] = [
  'betaSchedule',
  'betas',
  'trainSteps',
  'betaStart',
  'betaEnd',
  'zeroTerminalSnr',
  'sigmaMax',
  'sigmaMin',
  'flowShift',
];

/** What the handlers need of the server. */
export interface ViewContext extends RunContext {
  readonly caps: Capabilities;
  readonly docs: OpenDocuments;
  analyze(od: OpenDocument): Promise<Analyzed | null>;
  current(uri: string): Promise<{ od: OpenDocument; analyzed: Analyzed } | null>;
  readOf(uri: string, analyzed: Analyzed): FileReading | null;
  findingsOf(uri: string, analyzed: Analyzed): Finding[];
  fileFor(uri: string): Promise<{ file: FileReading | null; shown: Finding[]; version: number | null } | null>;
  settingsFor(uri: string): Promise<EditorSettings>;
}

export async function pullDiagnostics(
  ctx: ViewContext,
  params: DocumentDiagnosticParams,
  token: CancellationToken,
): Promise<DocumentDiagnosticReport> {
  const uri = requireUri(params, true);
  const od = ctx.docs.get(uri);
  if (!od) return { kind: 'full', items: [] };
  const analyzed = await ctx.analyze(od);
  if (token?.isCancellationRequested) {
    throw new ResponseError(LSPErrorCodes.ServerCancelled, 'cancelled: the document changed', { retriggerRequest: true });
  }
  if (!analyzed) return { kind: 'full', items: [] };
  const resultId = `${analyzed.version}:${analyzed.seq}`;
  if (params.previousResultId === resultId) return { kind: 'unchanged', resultId };
  return { kind: 'full', resultId, items: analyzed.diagnostics };
}

export async function hover(ctx: ViewContext, params: HoverParams): Promise<Hover | null> {
  const uri = requireUri(params, true);
  if (!isPosition(params.position)) throw new ResponseError(ErrorCodes.InvalidParams, 'params.position must be a position');
  const cur = await ctx.current(uri);
  const file = cur && ctx.readOf(uri, cur.analyzed);
  if (!cur || !file) return null;
  const offset = cur.od.doc.offsetAt(params.position);
  const format = ctx.caps.hoverMarkdown ? 'markdown' : 'plaintext';
  const images = hoverImages((await ctx.settingsFor(uri)).hover.images, ctx.caps.hoverImages, ctx.caps.hoverMarkdown);
  const hover = hoverAt(file, offset, format, { images });
  if (!hover) return null;
  return { contents: { kind: format, value: hover.text }, range: spanToRange(cur.od.doc, hover.span) };
}

export async function codeActions(ctx: ViewContext, params: CodeActionParams): Promise<CodeAction[]> {
  const uri = requireUri(params, true);
  const cur = await ctx.current(uri);
  if (!cur) return [];
  const current: CurrentFindings = {
    uri,
    version: cur.analyzed.version,
    text: cur.analyzed.text,
    mapper: cur.od.doc,
    findings: ctx.findingsOf(uri, cur.analyzed),
  };
  const only = Array.isArray(params.context?.only) ? params.context.only : undefined;
  const actions: CodeAction[] = [];
  if (kindRequested(only, CodeActionKind.QuickFix)) actions.push(...quickFixes(params, current, ctx.caps.versionedEdits));
  if (kindRequested(only, CodeActionKind.QuickFix)) actions.push(...runCodeActions(ctx, params));
  if (kindRequested(only, FIX_ALL_KIND)) {
    const all = fixAllAction(current, ctx.caps.versionedEdits);
    if (all) actions.push(all);
  }
  return actions;
}

export async function inlayHints(ctx: ViewContext, params: InlayHintParams): Promise<InlayHint[]> {
  const uri = requireUri(params, true);
  const cur = await ctx.current(uri);
  const file = cur && ctx.readOf(uri, cur.analyzed);
  if (!cur || !file) return [];
  const doc = cur.od.doc;
  const range = params.range;
  const from = range ? doc.offsetAt(range.start) : 0;
  const to = range ? doc.offsetAt(range.end) : Infinity;
  return inlineHintsFor(file)
    .filter((h) => h.offset >= from && h.offset <= to)
    .map((h) => ({ position: doc.positionAt(h.offset), label: h.label, tooltip: h.tooltip, paddingLeft: true }));
}

export async function codeLenses(ctx: ViewContext, params: CodeLensParams): Promise<CodeLens[]> {
  const uri = requireUri(params, true);
  const cur = await ctx.current(uri);
  if (!cur?.analyzed.isDiffusionConfig) return [];
  const file = ctx.readOf(uri, cur.analyzed);
  if (!file) return [];
  const first = firstFieldOf(file, SCHEDULE_FIELDS);
  if (!first) return [];
  return [
    {
      range: spanToRange(cur.od.doc, first.span),
      command: { title: 'Show noise schedule', command: SHOW_SCHEDULE_COMMAND, arguments: [uri] },
    },
  ];
}

export async function plotData(ctx: ViewContext, params: UriParams) {
  const uri = requireUri(params, false);
  const found = await ctx.fileFor(uri);
  if (!found?.file) return null;
  return plotDataFor(found.file, uri, found.version);
}

export async function explain(ctx: ViewContext, params: UriParams): Promise<{ text: string }> {
  const uri = requireUri(params, false);
  const found = await ctx.fileFor(uri);
  if (!found) throw new ResponseError(ErrorCodes.InvalidParams, `${uri}: not an open document or a readable file`);
  if (!found.file) return { text: 'noiselint is turned off for this file (setting noiselint.enable or files.include / files.exclude).\n' };
  return { text: formatExplainText(found.file) };
}

export async function summary(ctx: ViewContext, params: UriParams) {
  const uri = requireUri(params, false);
  const found = await ctx.fileFor(uri);
  return summaryFor(found?.file ? { ...found.file, findings: found.shown } : null, uri);
}
