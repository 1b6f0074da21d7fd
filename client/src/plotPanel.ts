// The "noise schedule" webview: log-SNR and signal amplitude over t for one document, kept live
// while the document changes.
import { randomBytes } from 'node:crypto';
import * as vscode from 'vscode';
import { PLOT_DATA_REQUEST, type PlotData, type PlotDataParams } from './protocol';
import type { ServerController } from './server';
import type { FromWebview, ToWebview } from './webview/messages';

const REFRESH_DELAY_MS = 350;

export class PlotPanel implements vscode.Disposable {
  static readonly viewType = 'noiselint.schedulePlot';
  private static current: PlotPanel | undefined;

  private readonly disposables: vscode.Disposable[] = [];
  private uri: vscode.Uri;
  private ready = false;
  private timer: ReturnType<typeof setTimeout> | undefined;
  private sequence = 0;
  private lastMessage: ToWebview | undefined;

  /** Opens the plot for `uri`, reusing the open panel. */
  static show(context: vscode.ExtensionContext, server: ServerController, uri: vscode.Uri): PlotPanel {
    const column = vscode.window.activeTextEditor ? vscode.ViewColumn.Beside : vscode.ViewColumn.Active;
    if (PlotPanel.current) {
      PlotPanel.current.setDocument(uri);
      PlotPanel.current.panel.reveal(column, true);
      return PlotPanel.current;
    }
    const panel = vscode.window.createWebviewPanel(
      PlotPanel.viewType,
      'Noise schedule',
      { viewColumn: column, preserveFocus: true },
      {
        enableScripts: true,
        enableFindWidget: false,
        localResourceRoots: [vscode.Uri.joinPath(context.extensionUri, 'media')],
      },
    );
    PlotPanel.current = new PlotPanel(panel, context, server, uri);
    return PlotPanel.current;
  }

  private constructor(
    private readonly panel: vscode.WebviewPanel,
    private readonly context: vscode.ExtensionContext,
    private readonly server: ServerController,
    uri: vscode.Uri,
  ) {
    this.uri = uri;
    panel.iconPath = vscode.Uri.joinPath(context.extensionUri, 'media', 'icon.png');
    panel.webview.html = this.html();
    this.updateTitle();
    this.disposables.push(
      panel.onDidDispose(() => this.dispose()),
      panel.webview.onDidReceiveMessage((message: FromWebview) => this.onMessage(message)),
      panel.onDidChangeViewState(() => {
        // A hidden webview loses its content; it sends "ready" again when shown.
        if (!panel.visible) this.ready = false;
      }),
      server.onPlotChanged((changed) => {
        if (changed === this.uri.toString()) this.scheduleRefresh();
      }),
      server.onDidStart(() => this.scheduleRefresh()),
      // Fallback for servers that do not announce plot changes: re-request after typing settles.
      vscode.workspace.onDidChangeTextDocument((event) => {
        if (event.document.uri.toString() === this.uri.toString() && event.contentChanges.length > 0) {
          this.scheduleRefresh();
        }
      }),
      vscode.workspace.onDidChangeConfiguration((event) => {
        if (event.affectsConfiguration('noiselint')) this.scheduleRefresh();
      }),
    );
  }

  setDocument(uri: vscode.Uri): void {
    this.uri = uri;
    this.updateTitle();
    this.post({ type: 'loading', fileName: this.fileName() });
    void this.refresh();
  }

  private fileName(): string {
    const path = this.uri.path;
    return path.slice(path.lastIndexOf('/') + 1) || this.uri.toString();
  }

  private updateTitle(): void {
    this.panel.title = `Noise schedule: ${this.fileName()}`;
  }

  private scheduleRefresh(): void {
    if (this.timer) clearTimeout(this.timer);
    this.timer = setTimeout(() => {
      this.timer = undefined;
      void this.refresh();
    }, REFRESH_DELAY_MS);
  }

  private async refresh(): Promise<void> {
    const sequence = ++this.sequence;
    const fileName = this.fileName();
    let message: ToWebview;
    try {
      const params: PlotDataParams = { uri: this.uri.toString() };
      const data = await this.server.request<PlotData | null>(PLOT_DATA_REQUEST, params);
      message = { type: 'plot', fileName, data: data ?? null };
    } catch (error) {
      message = { type: 'error', fileName, message: error instanceof Error ? error.message : String(error) };
    }
    // A newer request (another document or a later edit) wins.
    if (sequence === this.sequence) this.post(message);
  }

  private post(message: ToWebview): void {
    if (message.type !== 'loading') this.lastMessage = message;
    if (this.ready) void this.panel.webview.postMessage(message);
  }

  private onMessage(message: FromWebview): void {
    if (message.type === 'ready') {
      this.ready = true;
      if (this.lastMessage) void this.panel.webview.postMessage(this.lastMessage);
      void this.refresh();
    } else if (message.type === 'showSource') {
      void vscode.window.showTextDocument(this.uri, { viewColumn: vscode.ViewColumn.One });
    }
  }

  private html(): string {
    const webview = this.panel.webview;
    const media = (name: string) => webview.asWebviewUri(vscode.Uri.joinPath(this.context.extensionUri, 'media', name));
    const nonce = makeNonce();
    const csp = [
      "default-src 'none'",
      `script-src 'nonce-${nonce}'`,
      `style-src ${webview.cspSource}`,
      `img-src ${webview.cspSource} data:`,
      `font-src ${webview.cspSource}`,
    ].join('; ');
    return `<!DOCTYPE html>
<html lang="en">
<head>
<meta charset="UTF-8">
<meta http-equiv="Content-Security-Policy" content="${csp}">
<meta name="viewport" content="width=device-width, initial-scale=1.0">
<link rel="stylesheet" href="${media('plot.css')}">
<title>Noise schedule</title>
</head>
<body>
<header>
  <h1 id="plot-title">Noise schedule</h1>
  <label id="doc-picker" hidden>Document <select id="doc-select" data-testid="noiselint-doc-select"></select></label>
</header>
<p id="plot-summary" class="summary">Loading…</p>
<ul id="plot-problems" class="problems" hidden></ul>
<section class="chart" aria-labelledby="logsnr-heading">
  <h2 id="logsnr-heading">log-SNR over training timestep t</h2>
  <div class="chart-box"><canvas id="chart-logsnr" data-testid="noiselint-plot-logsnr" role="img" aria-label="log-SNR over t"></canvas></div>
</section>
<section class="chart" aria-labelledby="signal-heading">
  <h2 id="signal-heading">Signal amplitude √ᾱ over training timestep t</h2>
  <div class="chart-box"><canvas id="chart-signal" data-testid="noiselint-plot-signal" role="img" aria-label="signal amplitude over t"></canvas></div>
</section>
<section class="chart tail" aria-labelledby="tail-heading">
  <h2 id="tail-heading">Signal amplitude at the noisy end (zoomed)</h2>
  <div class="chart-box tail-box"><canvas id="chart-tail" data-testid="noiselint-plot-tail" role="img" aria-label="signal amplitude over the last steps, zoomed"></canvas></div>
</section>
<p class="note" id="plot-note"></p>
<div id="plot-status" hidden data-state="loading" data-points="0" data-sampled="0" data-documents="0" data-document-index="0"></div>
<script nonce="${nonce}" src="${media('plot.js')}"></script>
</body>
</html>`;
  }

  private disposed = false;

  dispose(): void {
    if (this.disposed) return;
    this.disposed = true;
    if (PlotPanel.current === this) PlotPanel.current = undefined;
    if (this.timer) clearTimeout(this.timer);
    this.panel.dispose();
    for (const disposable of this.disposables.splice(0)) disposable.dispose();
  }
}

function makeNonce(): string {
  return randomBytes(24)
    .toString('base64')
    .replace(/[^A-Za-z0-9]/g, '');
}
