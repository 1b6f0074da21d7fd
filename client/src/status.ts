// Language status item: terminal SNR and the finding counts of the active file.
import * as vscode from 'vscode';
import { formatNumber, plural } from './format';
import { SHOW_SCHEDULE_COMMAND, SUMMARY_REQUEST, type DocumentSummary } from './protocol';
import { documentSelector, type ServerController } from './server';

const REFRESH_DELAY_MS = 250;

export class SummaryStatus implements vscode.Disposable {
  private readonly item: vscode.LanguageStatusItem;
  private readonly disposables: vscode.Disposable[] = [];
  private timer: ReturnType<typeof setTimeout> | undefined;
  private sequence = 0;

  constructor(private readonly server: ServerController) {
    this.item = vscode.languages.createLanguageStatusItem('noiselint.summary', documentSelector() as vscode.DocumentSelector);
    this.item.name = 'noiselint';
    this.item.text = 'noiselint';
    this.disposables.push(
      this.item,
      vscode.window.onDidChangeActiveTextEditor(() => this.schedule()),
      vscode.languages.onDidChangeDiagnostics((event) => {
        const active = vscode.window.activeTextEditor?.document.uri.toString();
        if (active && event.uris.some((uri) => uri.toString() === active)) this.schedule();
      }),
      server.onDidStart(() => this.schedule()),
    );
    this.schedule();
  }

  schedule(): void {
    if (this.timer) clearTimeout(this.timer);
    this.timer = setTimeout(() => {
      this.timer = undefined;
      void this.refresh();
    }, REFRESH_DELAY_MS);
  }

  private async refresh(): Promise<void> {
    const document = vscode.window.activeTextEditor?.document;
    if (!document || vscode.languages.match(documentSelector() as vscode.DocumentSelector, document) === 0) {
      void vscode.commands.executeCommand('setContext', 'noiselint.activeIsConfig', false);
      return;
    }
    const sequence = ++this.sequence;
    const uri = document.uri.toString();
    this.item.busy = true;
    let summary: DocumentSummary | undefined;
    let failure: string | undefined;
    try {
      summary = await this.server.request<DocumentSummary>(SUMMARY_REQUEST, { uri });
    } catch (error) {
      failure = error instanceof Error ? error.message : String(error);
    }
    if (sequence !== this.sequence) return;
    this.item.busy = false;
    void vscode.commands.executeCommand('setContext', 'noiselint.activeIsConfig', !!summary?.isDiffusionConfig);
    this.show(uri, summary, failure);
  }

  private show(uri: string, summary: DocumentSummary | undefined, failure: string | undefined): void {
    const item = this.item;
    item.command = undefined;
    if (!summary) {
      item.text = 'noiselint: not running';
      item.detail = failure;
      item.severity = vscode.LanguageStatusSeverity.Warning;
      item.command = { title: 'Restart', command: 'noiselint.restartServer' };
      return;
    }
    if (summary.state === 'not-a-config' || !summary.isDiffusionConfig) {
      item.text = 'No noise schedule';
      item.detail = 'noiselint: this file does not look like a diffusion config';
      item.severity = vscode.LanguageStatusSeverity.Information;
      return;
    }
    const counts = [
      summary.errors ? plural(summary.errors, 'error') : '',
      summary.warnings ? plural(summary.warnings, 'warning') : '',
      summary.infos ? plural(summary.infos, 'note') : '',
    ].filter(Boolean);
    item.text = summary.terminalSnr === null ? 'Terminal SNR n/a' : `Terminal SNR ${formatNumber(summary.terminalSnr)}`;
    const signal = summary.terminalSignal === null ? '' : `signal at the last step ${formatNumber(summary.terminalSignal)}; `;
    item.detail = `noiselint: ${signal}${counts.length ? counts.join(', ') : 'no findings'}`;
    item.severity =
      summary.state === 'errors'
        ? vscode.LanguageStatusSeverity.Error
        : summary.state === 'warnings'
          ? vscode.LanguageStatusSeverity.Warning
          : vscode.LanguageStatusSeverity.Information;
    item.command = { title: 'Show schedule', command: SHOW_SCHEDULE_COMMAND, arguments: [uri] };
  }

  dispose(): void {
    if (this.timer) clearTimeout(this.timer);
    for (const disposable of this.disposables.splice(0)) disposable.dispose();
  }
}
