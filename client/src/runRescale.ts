// "Rescale the run to zero terminal SNR": asks the server for the run rescale of the active file's
// run (one edit across the training file and its sampling files), shows it in the refactor preview
// (every entry needs confirmation and says the model needs fine-tuning), and keeps what the files
// held before so that "Undo the run rescale" puts every file back at once.
import * as vscode from 'vscode';
import { RUN_RESCALE_REQUEST, type RunRescaleResult } from './protocol';
import type { ServerController } from './server';

interface LspPosition {
  line: number;
  character: number;
}
interface LspTextEdit {
  range: { start: LspPosition; end: LspPosition };
  newText: string;
}
interface LspEdit {
  documentChanges?: { textDocument: { uri: string }; edits: LspTextEdit[] }[];
  changes?: Record<string, LspTextEdit[]>;
  changeAnnotations?: Record<string, { label: string; description?: string; needsConfirmation?: boolean }>;
}

/** The texts before the last applied run rescale, and what they became. */
interface Snapshot {
  files: { uri: vscode.Uri; before: string; after: string }[];
}

let last: Snapshot | undefined;

function toRange(r: LspTextEdit['range']): vscode.Range {
  return new vscode.Range(r.start.line, r.start.character, r.end.line, r.end.character);
}

/** The server's edit as a vscode edit whose entries need confirmation (so the preview opens). */
function toWorkspaceEdit(result: RunRescaleResult): { edit: vscode.WorkspaceEdit; uris: vscode.Uri[] } {
  const lsp = result.edit as LspEdit;
  const annotation = Object.values(lsp.changeAnnotations ?? {})[0];
  const metadata: vscode.WorkspaceEditEntryMetadata = {
    needsConfirmation: true,
    label: annotation?.label ?? (result.needsRetraining ? 'The model needs fine-tuning after this change' : 'Sampling-only changes'),
    description: annotation?.description ?? result.cautions.join(' '),
  };
  const edit = new vscode.WorkspaceEdit();
  const uris: vscode.Uri[] = [];
  const add = (uriText: string, edits: LspTextEdit[]) => {
    const uri = vscode.Uri.parse(uriText, true);
    uris.push(uri);
    for (const e of edits) edit.replace(uri, toRange(e.range), e.newText, metadata);
  };
  for (const change of lsp.documentChanges ?? []) add(change.textDocument.uri, change.edits);
  for (const [uri, edits] of Object.entries(lsp.changes ?? {})) add(uri, edits);
  return { edit, uris };
}

async function textOf(uri: vscode.Uri): Promise<string> {
  return (await vscode.workspace.openTextDocument(uri)).getText();
}

export async function rescaleRun(
  controller: ServerController,
  output: vscode.LogOutputChannel,
  uri: vscode.Uri | undefined,
  samplingOnly = false,
): Promise<void> {
  if (!uri) {
    void vscode.window.showInformationMessage('noiselint: open a training or sampling file of the run first.');
    return;
  }
  let result: RunRescaleResult | null;
  try {
    result = await controller.request<RunRescaleResult | null>(RUN_RESCALE_REQUEST, { uri: uri.toString(), samplingOnly });
  } catch (error) {
    void vscode.window.showWarningMessage(`noiselint: ${error instanceof Error ? error.message : String(error)}`);
    return;
  }
  if (!result || result.empty) {
    void vscode.window.showInformationMessage('noiselint: nothing to change: this run is already at zero terminal SNR (or is not a diffusion run).');
    return;
  }
  output.info(`${result.title}\n${result.changes.join('\n')}\n${result.numbers}${result.notes.join('\n')}\n${result.cautions.join('\n')}`);
  const { edit, uris } = toWorkspaceEdit(result);
  const before = await Promise.all(uris.map(async (u) => ({ uri: u, before: await textOf(u) })));
  // Entries that need confirmation: the editor shows the refactor preview and applies on "Apply".
  const applied = await vscode.workspace.applyEdit(edit);
  const after = await Promise.all(before.map(async (f) => ({ ...f, after: await textOf(f.uri) })));
  if (!applied || after.every((f) => f.after === f.before)) return;
  last = { files: after };
  const notes = result.notes.length ? ` ${result.notes.join(' ')}` : '';
  const caution = result.needsRetraining ? result.cautions[0] : (result.cautions[1] ?? '');
  void vscode.window.showWarningMessage(`noiselint: run rescaled in ${after.length} files (unsaved). ${caution}${notes}`);
}

/** Puts every file of the last run rescale back, when none of them was edited since. */
export async function undoRunRescale(): Promise<void> {
  const snapshot = last;
  if (!snapshot) {
    void vscode.window.showInformationMessage('noiselint: no run rescale to undo.');
    return;
  }
  const docs = await Promise.all(snapshot.files.map((f) => vscode.workspace.openTextDocument(f.uri)));
  const changed = snapshot.files.filter((f, i) => docs[i]!.getText() !== f.after);
  if (changed.length > 0) {
    void vscode.window.showWarningMessage(
      `noiselint: not undone: ${changed.map((f) => vscode.workspace.asRelativePath(f.uri)).join(', ')} changed after the run rescale.`,
    );
    return;
  }
  const edit = new vscode.WorkspaceEdit();
  snapshot.files.forEach((f, i) => {
    const doc = docs[i]!;
    edit.replace(f.uri, new vscode.Range(doc.positionAt(0), doc.positionAt(doc.getText().length)), f.before);
  });
  if (await vscode.workspace.applyEdit(edit)) {
    last = undefined;
    void vscode.window.showInformationMessage(`noiselint: run rescale undone in ${snapshot.files.length} files (unsaved).`);
  }
}
