// noiselint for VS Code: starts the bundled language server and adds the editor-side pieces
// (schedule plot, explain view, fix-all command, language status). All checking happens in the server.
import * as vscode from 'vscode';
import { EXPLAIN_SCHEME, ExplainProvider } from './explain';
import { fixAllInActiveEditor } from './fixAll';
import { PlotPanel } from './plotPanel';
import { rescaleRun, undoRunRescale } from './runRescale';
import { SHOW_SCHEDULE_COMMAND } from './protocol';
import { ServerController } from './server';
import { SummaryStatus } from './status';

let server: ServerController | undefined;

export async function activate(context: vscode.ExtensionContext): Promise<void> {
  const output = vscode.window.createOutputChannel('noiselint', { log: true });
  server = new ServerController(context, output);
  const controller = server;
  const explain = new ExplainProvider(controller);

  context.subscriptions.push(
    output,
    controller,
    explain,
    new SummaryStatus(controller),
    vscode.workspace.registerTextDocumentContentProvider(EXPLAIN_SCHEME, explain),
    vscode.commands.registerCommand(SHOW_SCHEDULE_COMMAND, (target?: unknown) => {
      const uri = targetUri(target);
      if (!uri) {
        void vscode.window.showInformationMessage('noiselint: open a diffusion config to see its noise schedule.');
        return;
      }
      PlotPanel.show(context, controller, uri);
    }),
    vscode.commands.registerCommand('noiselint.fixAll', () => fixAllInActiveEditor()),
    vscode.commands.registerCommand('noiselint.explain', async (target?: unknown) => {
      const uri = targetUri(target);
      if (!uri) {
        void vscode.window.showInformationMessage('noiselint: open a diffusion config to explain it.');
        return;
      }
      const doc = await vscode.workspace.openTextDocument(ExplainProvider.uriFor(uri));
      await vscode.window.showTextDocument(doc, { viewColumn: vscode.ViewColumn.Beside, preview: true });
    }),
    vscode.commands.registerCommand('noiselint.rescaleRun', (target?: unknown) => rescaleRun(controller, output, targetUri(target))),
    vscode.commands.registerCommand('noiselint.rescaleRunSamplingOnly', (target?: unknown) =>
      rescaleRun(controller, output, targetUri(target), true),
    ),
    vscode.commands.registerCommand('noiselint.undoRunRescale', () => undoRunRescale()),
    vscode.commands.registerCommand('noiselint.restartServer', async () => {
      if (!enabled()) {
        void vscode.window.showInformationMessage('noiselint is turned off (setting noiselint.enable).');
        return;
      }
      await controller.restart();
    }),
    vscode.workspace.onDidChangeConfiguration(async (event) => {
      if (!event.affectsConfiguration('noiselint.enable')) return;
      if (enabled()) await controller.start();
      else await controller.stop();
    }),
  );

  if (enabled()) await controller.start();
}

export async function deactivate(): Promise<void> {
  await server?.stop();
  server = undefined;
}

function enabled(): boolean {
  return vscode.workspace.getConfiguration('noiselint').get<boolean>('enable', true);
}

/** The command argument (a uri string from the code lens, or a Uri from a menu) or the active editor. */
function targetUri(target: unknown): vscode.Uri | undefined {
  if (target instanceof vscode.Uri) return target;
  if (typeof target === 'string' && target.length > 0) {
    try {
      return vscode.Uri.parse(target, true);
    } catch {
      return undefined;
    }
  }
  return vscode.window.activeTextEditor?.document.uri;
}
