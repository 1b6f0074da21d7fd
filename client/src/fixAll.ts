// "Apply sampling-only fixes in this file": runs the server's source.fixAll.noiselint code action on the active editor.
import * as vscode from 'vscode';
import { FIX_ALL_KIND } from './protocol';

export async function fixAllInActiveEditor(): Promise<void> {
  const editor = vscode.window.activeTextEditor;
  if (!editor) {
    void vscode.window.showInformationMessage('noiselint: open a diffusion config first.');
    return;
  }
  const document = editor.document;
  const whole = new vscode.Range(document.positionAt(0), document.positionAt(document.getText().length));
  const actions =
    (await vscode.commands.executeCommand<(vscode.CodeAction | vscode.Command)[]>(
      'vscode.executeCodeActionProvider',
      document.uri,
      whole,
      FIX_ALL_KIND,
      1,
    )) ?? [];
  const fixAll = actions.find(
    (action): action is vscode.CodeAction =>
      'kind' in action && !!action.kind && action.kind.value === FIX_ALL_KIND && (!!action.edit || !!action.command),
  );
  if (!fixAll) {
    void vscode.window.showInformationMessage('noiselint: nothing in this file can be fixed automatically.');
    return;
  }
  if (fixAll.edit && !(await vscode.workspace.applyEdit(fixAll.edit))) {
    void vscode.window.showWarningMessage('noiselint: the fixes could not be applied (the file changed meanwhile?).');
    return;
  }
  if (fixAll.command) {
    await vscode.commands.executeCommand(fixAll.command.command, ...(fixAll.command.arguments ?? []));
  }
}
