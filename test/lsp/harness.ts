/**
 * A small LSP client for the tests: spawns the real server (`node server/dist/noiselint.js lsp
 * --stdio`) and talks to it with vscode-jsonrpc. It records everything the server sends
 * (diagnostics in arrival order, plot notifications, registrations, progress, refresh requests)
 * and answers the server's requests (configuration, registration, progress creation).
 */
import { spawn, type ChildProcess } from 'node:child_process';
import { pathToFileURL } from 'node:url';
import { createMessageConnection, StreamMessageReader, StreamMessageWriter, type MessageConnection } from 'vscode-jsonrpc/node';
import type {
  ClientCapabilities,
  InitializeResult,
  PublishDiagnosticsParams,
  Range,
  TextDocumentContentChangeEvent,
} from 'vscode-languageserver-protocol';
import { ensureServerBuilt, REPO_ROOT } from './buildServer';

export const fileUri = (path: string) => pathToFileURL(path).href;

export const DEFAULT_CAPABILITIES: ClientCapabilities = {
  textDocument: {
    synchronization: { dynamicRegistration: false },
    hover: { contentFormat: ['markdown', 'plaintext'] },
    codeAction: { codeActionLiteralSupport: { codeActionKind: { valueSet: ['quickfix', 'source', 'source.fixAll'] } } },
    publishDiagnostics: { relatedInformation: true, versionSupport: true, codeDescriptionSupport: true, dataSupport: true },
    inlayHint: {},
    codeLens: {},
  },
  workspace: {
    configuration: true,
    workspaceFolders: true,
    didChangeConfiguration: { dynamicRegistration: true },
    didChangeWatchedFiles: { dynamicRegistration: true },
    workspaceEdit: { documentChanges: true },
  },
  window: { workDoneProgress: true },
};

export interface StartOptions {
  capabilities?: ClientCapabilities;
  /** Absolute folder paths. */
  workspaceFolders?: string[];
  /** Sent as `clientInfo` in initialize (the server decides on hover images by it). */
  clientInfo?: { name: string; version?: string };
  initializationOptions?: unknown;
  /** The `noiselint` settings section the client answers workspace/configuration with. */
  settings?: (scopeUri: string | undefined) => unknown;
}

type Waiter = { check: () => boolean; resolve: () => void };

export class LspClient {
  readonly diagnostics: PublishDiagnosticsParams[] = [];
  readonly plotChanged: string[] = [];
  readonly registrations: { method: string; registerOptions?: unknown }[] = [];
  readonly progressCreated: unknown[] = [];
  readonly progress: unknown[] = [];
  readonly logs: string[] = [];
  diagnosticRefreshes = 0;
  configurationRequests = 0;
  settings: (scopeUri: string | undefined) => unknown;
  initializeResult!: InitializeResult;
  private readonly waiters: Waiter[] = [];
  private exited = false;
  private stderr = '';

  private constructor(
    readonly conn: MessageConnection,
    readonly proc: ChildProcess,
    settings: StartOptions['settings'],
  ) {
    this.settings = settings ?? (() => ({}));
  }

  static async start(options: StartOptions = {}): Promise<LspClient> {
    const bundle = ensureServerBuilt();
    const proc = spawn(process.execPath, [bundle, 'lsp', '--stdio'], { cwd: REPO_ROOT, stdio: ['pipe', 'pipe', 'pipe'] });
    const conn = createMessageConnection(new StreamMessageReader(proc.stdout), new StreamMessageWriter(proc.stdin));
    const client = new LspClient(conn, proc, options.settings);
    proc.stderr.on('data', (d: Buffer) => (client.stderr += d.toString()));
    proc.on('exit', () => {
      client.exited = true;
      client.poke();
    });
    conn.onNotification('textDocument/publishDiagnostics', (p: PublishDiagnosticsParams) => {
      client.diagnostics.push(p);
      client.poke();
    });
    conn.onNotification('noiselint/plotChanged', (p: { uri: string }) => {
      client.plotChanged.push(p.uri);
      client.poke();
    });
    conn.onNotification('window/logMessage', (p: { message: string }) => void client.logs.push(p.message));
    conn.onNotification('$/progress', (p: unknown) => {
      client.progress.push(p);
      client.poke();
    });
    conn.onRequest('workspace/configuration', (p: { items: { scopeUri?: string; section?: string }[] }) => {
      client.configurationRequests++;
      return p.items.map((item) => client.settings(item.scopeUri));
    });
    conn.onRequest('client/registerCapability', (p: { registrations: { method: string; registerOptions?: unknown }[] }) => {
      client.registrations.push(...p.registrations);
      client.poke();
      return null;
    });
    conn.onRequest('window/workDoneProgress/create', (p: unknown) => {
      client.progressCreated.push(p);
      return null;
    });
    conn.onRequest('workspace/diagnostic/refresh', () => {
      client.diagnosticRefreshes++;
      client.poke();
      return null;
    });
    conn.onRequest('workspace/inlayHint/refresh', () => null);
    conn.onRequest('workspace/codeLens/refresh', () => null);
    conn.listen();
    const folders = options.workspaceFolders ?? [];
    const died = new Promise<never>((_, reject) =>
      proc.once('exit', (code) => reject(new Error(`the server exited (code ${code}) before initialize finished: ${client.stderr}`))),
    );
    client.initializeResult = await Promise.race([
      died,
      conn.sendRequest<InitializeResult>('initialize', {
        processId: process.pid,
        rootUri: folders[0] ? fileUri(folders[0]) : null,
        capabilities: options.capabilities ?? DEFAULT_CAPABILITIES,
        ...(options.clientInfo ? { clientInfo: options.clientInfo } : {}),
        ...(options.initializationOptions !== undefined ? { initializationOptions: options.initializationOptions } : {}),
        workspaceFolders: folders.map((f, i) => ({ uri: fileUri(f), name: `folder${i}` })),
      }),
    ]);
    died.catch(() => undefined);
    await conn.sendNotification('initialized', {});
    return client;
  }

  /** Re-checks every pending wait after something arrived. */
  private poke(): void {
    for (const w of [...this.waiters]) {
      if (w.check()) {
        this.waiters.splice(this.waiters.indexOf(w), 1);
        w.resolve();
      }
    }
  }

  /** Resolves once `check` holds (checked now and after every message); bounded by the test timeout. */
  waitUntil(check: () => boolean, what = 'condition'): Promise<void> {
    if (check()) return Promise.resolve();
    return new Promise((resolve, reject) => {
      const waiter: Waiter = {
        check: () => {
          if (this.exited) {
            reject(new Error(`server exited while waiting for ${what}; stderr: ${this.stderr}`));
            return true;
          }
          return check();
        },
        resolve,
      };
      this.waiters.push(waiter);
    });
  }

  /** The first publication for `uri` from index `since` on that satisfies `pred`. */
  async waitForDiagnostics(uri: string, pred: (p: PublishDiagnosticsParams) => boolean = () => true, since = 0): Promise<PublishDiagnosticsParams> {
    let found: PublishDiagnosticsParams | undefined;
    await this.waitUntil(() => {
      found = this.diagnostics.slice(since).find((p) => p.uri === uri && pred(p));
      return !!found;
    }, `diagnostics for ${uri}`);
    return found!;
  }

  publicationsFor(uri: string): PublishDiagnosticsParams[] {
    return this.diagnostics.filter((p) => p.uri === uri);
  }

  open(uri: string, text: string, languageId = 'yaml', version = 1): void {
    void this.conn.sendNotification('textDocument/didOpen', { textDocument: { uri, languageId, version, text } });
  }

  replace(uri: string, version: number, text: string): void {
    void this.conn.sendNotification('textDocument/didChange', { textDocument: { uri, version }, contentChanges: [{ text }] });
  }

  edit(uri: string, version: number, range: Range, text: string): void {
    const change: TextDocumentContentChangeEvent = { range, text };
    void this.conn.sendNotification('textDocument/didChange', { textDocument: { uri, version }, contentChanges: [change] });
  }

  close(uri: string): void {
    void this.conn.sendNotification('textDocument/didClose', { textDocument: { uri } });
  }

  request<R>(method: string, params: unknown): Promise<R> {
    return this.conn.sendRequest<R>(method, params);
  }

  notify(method: string, params: unknown): void {
    void this.conn.sendNotification(method, params);
  }

  get isRunning(): boolean {
    return !this.exited;
  }

  async stop(): Promise<void> {
    if (this.exited) return;
    const exited = new Promise<void>((resolve) => this.proc.once('exit', () => resolve()));
    try {
      await this.conn.sendRequest('shutdown');
      await this.conn.sendNotification('exit');
    } catch {
      this.proc.kill();
    }
    await exited;
    this.conn.dispose();
  }
}
