/**
 * The run rescale in the editor: a code action on the terminal-snr-leak finding, and the
 * `noiselint/runRescale` request the VS Code command uses, both returning one WorkspaceEdit
 * across every file of the run (fix/runRescale.ts plans it). Each edit carries one change
 * annotation that needs confirmation and says that the model needs fine-tuning, so an editor
 * shows the whole change in its refactor preview first. A client without change-annotation
 * support gets the same edit with the warning in the title.
 */
import { pathToFileURL } from 'node:url';
import {
  CodeActionKind,
  type AnnotatedTextEdit,
  type ChangeAnnotation,
  type CodeAction,
  type CodeActionParams,
  type TextDocumentEdit,
  type TextEdit as LspTextEdit,
  type WorkspaceEdit,
} from 'vscode-languageserver/node';
import type { RunRescaleParams, RunRescaleResult } from '../base/protocol';
import { planRunRescale, type RunPlan } from '../fix/runRescale';
import { LineIndex } from '../parse/lineIndex';
import { formatRunNumbers } from '../views/runRescale';
import type { RunRead } from '../workspace/run';
import type { Capabilities } from './capabilities';
import { DIAGNOSTIC_SOURCE, spanToRange, type PositionMapper } from './convert';
import type { OpenDocuments } from './documents';
import { uriToPath } from './util';

export const RUN_ANNOTATION_ID = 'noiselint.runRescale';
const LEAK_RULE = 'terminal-snr-leak';

/** What the run action needs of the server. */
export interface RunContext {
  readonly caps: Capabilities;
  readonly docs: OpenDocuments;
  /** The run of these files (absolute paths), read as check reads it (open documents' text). */
  readRun(paths: string[]): RunRead;
}

interface BuiltEdit {
  edit: WorkspaceEdit;
  uris: string[];
}

function uriOf(ctx: RunContext, abs: string): string {
  return ctx.docs.atPath(abs)?.uri ?? pathToFileURL(abs).href;
}

/** Label of the annotation (and the warning in the title without annotations). */
function warningOf(plan: RunPlan): string {
  return plan.changesTraining
    ? 'The model needs fine-tuning after this change: until then sampling gives worse images, not better ones'
    : 'Sampling-only: nothing the model learns changes';
}

/** One WorkspaceEdit across the run's files, annotated where the client can show it. */
function buildEdit(ctx: RunContext, run: RunRead, plan: RunPlan): BuiltEdit | null {
  const annotate = ctx.caps.changeAnnotations && ctx.caps.versionedEdits;
  const documentChanges: TextDocumentEdit[] = [];
  const changes: Record<string, LspTextEdit[]> = {};
  const uris: string[] = [];
  for (const file of run.files) {
    const fp = plan.files.find((p) => p.path === file.shown);
    if (!fp?.textEdits || fp.textEdits.length === 0) continue;
    const od = ctx.docs.atPath(file.abs);
    // The plan was made from the open document's text (the session reads through it).
    if (od && od.doc.getText() !== file.text) return null;
    const mapper: PositionMapper = od ? od.doc : new LineIndex(file.text);
    const uri = uriOf(ctx, file.abs);
    uris.push(uri);
    const edits = fp.textEdits.map((e) => ({ range: spanToRange(mapper, e.span), newText: e.newText }));
    if (ctx.caps.versionedEdits) {
      const annotated: (LspTextEdit | AnnotatedTextEdit)[] = annotate ? edits.map((e) => ({ ...e, annotationId: RUN_ANNOTATION_ID })) : edits;
      documentChanges.push({ textDocument: { uri, version: od ? od.doc.version : null }, edits: annotated });
    } else {
      changes[uri] = edits;
    }
  }
  if (uris.length === 0) return null;
  if (!ctx.caps.versionedEdits) return { edit: { changes }, uris };
  const edit: WorkspaceEdit = { documentChanges };
  if (annotate) {
    const annotation: ChangeAnnotation = {
      label: warningOf(plan),
      needsConfirmation: true,
      description: [...plan.notes, ...plan.cautions].join(' '),
    };
    edit.changeAnnotations = { [RUN_ANNOTATION_ID]: annotation };
  }
  return { edit, uris };
}

function titleOf(ctx: RunContext, plan: RunPlan, files: number, samplingOnly: boolean): string {
  const what = samplingOnly ? 'Rescale the run: sampling-only changes (spacing, guidance rescale)' : 'Rescale the whole run to zero terminal SNR';
  const count = `${files} ${files === 1 ? 'file' : 'files'}`;
  // Without annotations the title carries the warning the preview would show.
  if (ctx.caps.changeAnnotations && ctx.caps.versionedEdits) return `${what} (${count}${plan.changesTraining ? '; needs fine-tuning' : ''})`;
  return `${what} (${count}) - ${warningOf(plan)}`;
}

/** The run rescale of the run `path` belongs to, or null when there is nothing to change. */
export function runRescaleFor(ctx: RunContext, path: string, samplingOnly: boolean): (RunRescaleResult & { edit: WorkspaceEdit }) | null {
  const run = ctx.readRun([path]);
  if (run.files.length === 0 || run.problems.length > 0) return null;
  const plan = planRunRescale(
    run.files.map((f) => ({ path: f.shown, side: f.side, reading: f.reading })),
    { samplingOnly },
  );
  if (plan.blocked.length > 0 || plan.empty) return null;
  const built = buildEdit(ctx, run, plan);
  if (!built) return null;
  return {
    edit: built.edit,
    title: titleOf(ctx, plan, built.uris.length, samplingOnly),
    uris: built.uris,
    changes: plan.files.flatMap((f) => f.changes.flatMap((c) => c.what.map((w) => `${f.path}: ${w}`))),
    numbers: formatRunNumbers(plan),
    notes: plan.notes,
    cautions: [...plan.cautions],
    needsRetraining: plan.changesTraining,
    empty: plan.empty,
  };
}

/** The code actions on a terminal-snr-leak diagnostic of this document: the whole run, and its sampling-only part. */
export function runCodeActions(ctx: RunContext, params: CodeActionParams): CodeAction[] {
  const diagnostics = (params.context?.diagnostics ?? []).filter((d) => d?.source === DIAGNOSTIC_SOURCE && d.code === LEAK_RULE);
  if (diagnostics.length === 0) return [];
  const path = uriToPath(params.textDocument.uri);
  if (!path) return [];
  const out: CodeAction[] = [];
  for (const samplingOnly of [false, true]) {
    const result = runRescaleFor(ctx, path, samplingOnly);
    if (!result) continue;
    out.push({ title: result.title, kind: CodeActionKind.QuickFix, diagnostics, edit: result.edit });
  }
  return out;
}

/** The `noiselint/runRescale` request. */
export function runRescaleRequest(ctx: RunContext, params: RunRescaleParams): RunRescaleResult | null {
  const path = typeof params?.uri === 'string' ? uriToPath(params.uri) : null;
  if (!path) return null;
  return runRescaleFor(ctx, path, params.samplingOnly === true);
}
