// Starts, stops and restarts the bundled language server (`noiselint lsp --stdio`).
import * as vscode from 'vscode';
import { LanguageClient, TransportKind, type DocumentSelector, type LanguageClientOptions, type ServerOptions } from 'vscode-languageclient/node';
import { LANGUAGES, PLOT_CHANGED_NOTIFICATION, type UriParams } from './protocol';

/**
 * Documents we check: YAML / JSON / JSONC / TOML on disk or unsaved, plus the schemes of virtual workspace
 * folders (the server gets their text through didOpen, so it needs no file system for them).
 * Other schemes (git diffs, output, ...) are left alone so old versions do not show up as problems.
 */
export function documentSelector(): DocumentSelector {
  const schemes = new Set(['file', 'untitled']);
  for (const folder of vscode.workspace.workspaceFolders ?? []) schemes.add(folder.uri.scheme);
  const selector: { language: string; scheme: string }[] = [];
  for (const scheme of schemes) {
    for (const language of LANGUAGES) selector.push({ language, scheme });
  }
  return selector;
}

export class ServerController implements vscode.Disposable {
  private client: LanguageClient | undefined;
  private starting: Promise<void> | undefined;
  private readonly plotChanged = new vscode.EventEmitter<string>();
  private readonly started = new vscode.EventEmitter<void>();
  /** Fires with the document uri (string) whose plot data changed. */
  readonly onPlotChanged = this.plotChanged.event;
  /** Fires when a (re)started server is ready. */
  readonly onDidStart = this.started.event;

  constructor(
    private readonly context: vscode.ExtensionContext,
    private readonly output: vscode.LogOutputChannel,
  ) {}

  /** The running client, or undefined when the server is off or failed to start. */
  get running(): LanguageClient | undefined {
    return this.client?.isRunning() ? this.client : undefined;
  }

  async start(): Promise<void> {
    if (this.client) return this.starting;
    const serverModule = process.env.NOISELINT_SERVER_PATH || this.context.asAbsolutePath('dist/server.js');
    const serverOptions: ServerOptions = {
      // TransportKind.stdio adds `--stdio` to the arguments.
      run: { module: serverModule, transport: TransportKind.stdio, args: ['lsp'] },
      debug: {
        module: serverModule,
        transport: TransportKind.stdio,
        args: ['lsp'],
        options: { execArgv: ['--nolazy', '--inspect=6019'] },
      },
    };
    const clientOptions: LanguageClientOptions = {
      documentSelector: documentSelector(),
      // The server pulls the "noiselint" section with workspace/configuration; this also makes the
      // client tell it when the section changes.
      synchronize: { configurationSection: 'noiselint' },
      outputChannel: this.output,
      diagnosticCollectionName: 'noiselint',
    };
    const client = new LanguageClient('noiselint', 'noiselint language server', serverOptions, clientOptions);
    client.onNotification(PLOT_CHANGED_NOTIFICATION, (params: UriParams) => {
      if (params && typeof params.uri === 'string') this.plotChanged.fire(params.uri);
    });
    this.client = client;
    this.starting = client.start().then(
      () => this.started.fire(),
      (error: unknown) => {
        this.output.error(`noiselint: the language server did not start: ${String(error)}`);
        void vscode.window
          .showErrorMessage('noiselint: the language server did not start. See the output for details.', 'Show output')
          .then((choice) => {
            if (choice) this.output.show(true);
          });
      },
    );
    return this.starting;
  }

  async stop(): Promise<void> {
    const client = this.client;
    this.client = undefined;
    this.starting = undefined;
    if (!client) return;
    try {
      await client.stop();
    } catch (error) {
      this.output.warn(`noiselint: stopping the server: ${String(error)}`);
    }
  }

  async restart(): Promise<void> {
    await this.stop();
    await this.start();
  }

  /**
   * Sends a request to the server. Throws when the server is off or not running, or when the
   * request failed (the message is logged to the output channel too).
   */
  async request<R>(method: string, params: unknown, token?: vscode.CancellationToken): Promise<R> {
    if (this.starting) await this.starting;
    const client = this.running;
    if (!client) {
      throw new Error(
        vscode.workspace.getConfiguration('noiselint').get<boolean>('enable', true)
          ? 'the noiselint language server is not running (see the noiselint output)'
          : 'noiselint is turned off (setting noiselint.enable)',
      );
    }
    try {
      return await client.sendRequest<R>(method, params, token);
    } catch (error) {
      const message = error instanceof Error ? error.message : String(error);
      if (!token?.isCancellationRequested) this.output.warn(`${method} failed: ${message}`);
      throw new Error(message);
    }
  }

  dispose(): void {
    void this.stop();
    this.plotChanged.dispose();
    this.started.dispose();
  }
}
