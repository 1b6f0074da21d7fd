// "Explain this config": the server's explanation as a read-only virtual document.
import * as vscode from 'vscode';
import { EXPLAIN_REQUEST } from './protocol';
import type { ServerController } from './server';

export const EXPLAIN_SCHEME = 'noiselint-explain';

export class ExplainProvider implements vscode.TextDocumentContentProvider, vscode.Disposable {
  private readonly changed = new vscode.EventEmitter<vscode.Uri>();
  readonly onDidChange = this.changed.event;
  private readonly subscription: vscode.Disposable;

  constructor(private readonly server: ServerController) {
    // Keep open explanations in step with their source document.
    this.subscription = server.onPlotChanged((source) => {
      for (const doc of vscode.workspace.textDocuments) {
        if (doc.uri.scheme === EXPLAIN_SCHEME && doc.uri.query === source) this.changed.fire(doc.uri);
      }
    });
  }

  /** The virtual document showing the explanation of `source`. */
  static uriFor(source: vscode.Uri): vscode.Uri {
    const name = source.path.slice(source.path.lastIndexOf('/') + 1) || 'untitled';
    return vscode.Uri.from({ scheme: EXPLAIN_SCHEME, path: `/${name} (explained)`, query: source.toString() });
  }

  async provideTextDocumentContent(uri: vscode.Uri, token: vscode.CancellationToken): Promise<string> {
    try {
      const result = await this.server.request<{ text: string }>(EXPLAIN_REQUEST, { uri: uri.query }, token);
      return result?.text ?? 'noiselint has no explanation for this file.';
    } catch (error) {
      return `noiselint could not explain ${uri.query}: ${error instanceof Error ? error.message : String(error)}`;
    }
  }

  dispose(): void {
    this.subscription.dispose();
    this.changed.dispose();
  }
}
