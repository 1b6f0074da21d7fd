/** Applies LSP text edits (and workspace edits) to a text through the project's own applyEdits. */
import type { TextEdit as LspTextEdit, WorkspaceEdit } from 'vscode-languageserver-protocol';
import { applyEdits } from '../../server/src/fix/apply';
import { LineIndex } from '../../server/src/parse/lineIndex';

export function applyLspEdits(text: string, edits: LspTextEdit[]): string {
  const index = new LineIndex(text);
  return applyEdits(
    text,
    edits.map((e) => ({ span: { start: index.offsetAt(e.range.start), end: index.offsetAt(e.range.end) }, newText: e.newText })),
  );
}

/** The edits a workspace edit makes to `uri` (documentChanges or changes). */
export function editsFor(edit: WorkspaceEdit | undefined, uri: string): LspTextEdit[] {
  if (!edit) return [];
  const out: LspTextEdit[] = [];
  for (const change of edit.documentChanges ?? []) {
    if ('textDocument' in change && change.textDocument.uri === uri) out.push(...(change.edits as LspTextEdit[]));
  }
  out.push(...(edit.changes?.[uri] ?? []));
  return out;
}
