/**
 * A minimal LSP client for tests and benchmarks: spawns the real server
 * (`node server/dist/noiselint.js lsp --stdio`), speaks JSON-RPC over its stdio, answers the
 * server's own requests (configuration, registration, progress) and records every
 * publishDiagnostics with the time it arrived.
 */
import { spawn, type ChildProcess } from 'node:child_process';
import { readFileSync } from 'node:fs';
import { createMessageConnection, StreamMessageReader, StreamMessageWriter, type MessageConnection } from 'vscode-jsonrpc/node';
import type { Diagnostic, InitializeParams, PublishDiagnosticsParams } from 'vscode-languageserver-protocol';
import { CLI, REPO } from '../adversarial/helpers';

export interface Published {
  version: number | undefined;
  diagnostics: Diagnostic[];
  /** performance.now() when it arrived. */
  at: number;
  seq: number;
}

interface Waiter {
  uri: string;
  accept: (p: Published) => boolean;
  resolve: (p: Published) => void;
}

export interface StartOptions {
  nodeArgs?: string[];
  cwd?: string;
  rootUri?: string | null;
  initializationOptions?: unknown;
  /** Client settings returned for workspace/configuration (one object for every item). */
  settings?: unknown;
}

export class LspTestClient {
  readonly latest = new Map<string, Published>();
  readonly publishCount = new Map<string, number>();
  private waiters: Waiter[] = [];
  private seq = 0;
  private stderrChunks: string[] = [];
  private exited: Promise<number | null>;
  exitCode: number | null | undefined = undefined;
  /** Every publishDiagnostics, in order (uri, version, arrival); capped to keep memory flat. */
  readonly log: { uri: string; version: number | undefined; at: number; count: number }[] = [];

  private constructor(
    readonly proc: ChildProcess,
    readonly connection: MessageConnection,
    settings: unknown,
  ) {
    proc.stderr!.setEncoding('utf8');
    proc.stderr!.on('data', (d: string) => {
      if (this.stderrChunks.length < 2000) this.stderrChunks.push(d);
    });
    this.exited = new Promise((resolve) =>
      proc.on('exit', (code) => {
        this.exitCode = code;
        resolve(code);
      }),
    );
    connection.onNotification('textDocument/publishDiagnostics', (p: PublishDiagnosticsParams) => {
      const published: Published = { version: p.version, diagnostics: p.diagnostics, at: performance.now(), seq: ++this.seq };
      this.latest.set(p.uri, published);
      this.publishCount.set(p.uri, (this.publishCount.get(p.uri) ?? 0) + 1);
      if (this.log.length < 200_000) this.log.push({ uri: p.uri, version: p.version, at: published.at, count: p.diagnostics.length });
      this.waiters = this.waiters.filter((w) => {
        if (w.uri !== p.uri || !w.accept(published)) return true;
        w.resolve(published);
        return false;
      });
    });
    // The server's own requests: answer them the way an editor would.
    connection.onRequest((method: string, params: unknown) => {
      if (method === 'workspace/configuration') {
        const items = (params as { items?: unknown[] })?.items ?? [];
        return items.map(() => settings ?? null);
      }
      return null;
    });
    connection.onNotification(() => {
      /* logMessage, telemetry, plotChanged: ignored */
    });
  }

  static async start(opts: StartOptions = {}): Promise<LspTestClient> {
    const proc = spawn(process.execPath, [...(opts.nodeArgs ?? []), CLI, 'lsp', '--stdio'], {
      cwd: opts.cwd ?? REPO,
      stdio: ['pipe', 'pipe', 'pipe'],
    });
    const connection = createMessageConnection(new StreamMessageReader(proc.stdout), new StreamMessageWriter(proc.stdin));
    const client = new LspTestClient(proc, connection, opts.settings);
    connection.listen();
    const params: InitializeParams = {
      processId: process.pid,
      rootUri: opts.rootUri === undefined ? (opts.cwd ? `file://${opts.cwd}` : null) : opts.rootUri,
      workspaceFolders: opts.cwd ? [{ uri: `file://${opts.cwd}`, name: 'ws' }] : null,
      initializationOptions: opts.initializationOptions,
      capabilities: {
        workspace: { configuration: true, workspaceFolders: true, didChangeConfiguration: { dynamicRegistration: true } },
        textDocument: {
          synchronization: { didSave: true, dynamicRegistration: false },
          publishDiagnostics: { versionSupport: true, relatedInformation: true, codeDescriptionSupport: true },
          hover: { contentFormat: ['markdown', 'plaintext'] },
          codeAction: {
            codeActionLiteralSupport: { codeActionKind: { valueSet: ['quickfix', 'source', 'source.fixAll'] } },
            isPreferredSupport: true,
          },
          inlayHint: {},
          codeLens: {},
        },
        window: { workDoneProgress: false },
      },
    };
    await connection.sendRequest('initialize', params);
    await connection.sendNotification('initialized', {});
    return client;
  }

  open(uri: string, text: string, languageId = 'yaml', version = 1): void {
    void this.connection.sendNotification('textDocument/didOpen', { textDocument: { uri, languageId, version, text } });
  }

  /** Full-text change (the server declares its sync kind; full text is always accepted). */
  change(uri: string, version: number, text: string): void {
    void this.connection.sendNotification('textDocument/didChange', { textDocument: { uri, version }, contentChanges: [{ text }] });
  }

  close(uri: string): void {
    void this.connection.sendNotification('textDocument/didClose', { textDocument: { uri } });
  }

  /** Resolves with the first publish for `uri` that `accept` takes (checks the latest one first). */
  waitFor(uri: string, accept: (p: Published) => boolean): Promise<Published> {
    const now = this.latest.get(uri);
    if (now && accept(now)) return Promise.resolve(now);
    return new Promise((resolve) => this.waiters.push({ uri, accept, resolve }));
  }

  /** Diagnostics published for exactly `version` (the server sends versions: versionSupport). */
  async diagnosticsFor(uri: string, version: number): Promise<Diagnostic[]> {
    return (await this.settled(uri, version)).diagnostics;
  }

  /**
   * The diagnostics of `version`: the publish that carries that version, or, from a server that
   * sends no versions, the latest publish once none has arrived for `quietMs`.
   */
  async settled(uri: string, version: number, quietMs = 1500): Promise<Published> {
    const exact = this.waitFor(uri, (p) => p.version === version);
    for (;;) {
      const before = this.latest.get(uri)?.seq;
      const winner = await Promise.race([exact, new Promise<null>((r) => setTimeout(() => r(null), quietMs))]);
      if (winner) return winner;
      const now = this.latest.get(uri);
      if (now && now.version === undefined && now.seq === before) return now;
      if (!this.alive) throw new Error(`server exited (code ${this.exitCode}) before publishing ${uri} v${version}`);
    }
  }

  /** Resident set size of the server process, from /proc/<pid>/status (kB). */
  rssKb(): number {
    const status = readFileSync(`/proc/${this.proc.pid}/status`, 'utf8');
    const m = /VmRSS:\s+(\d+)\s*kB/.exec(status);
    if (!m) throw new Error('no VmRSS in /proc status');
    return Number(m[1]);
  }

  /** What the server wrote to stderr (capped). */
  stderr(): string {
    return this.stderrChunks.join('');
  }

  get alive(): boolean {
    return this.exitCode === undefined;
  }

  async stop(): Promise<number | null> {
    if (this.alive) {
      try {
        await Promise.race([this.connection.sendRequest('shutdown'), new Promise((r) => setTimeout(r, 5000))]);
        await this.connection.sendNotification('exit');
      } catch {
        /* already gone */
      }
      const timer = setTimeout(() => this.proc.kill('SIGKILL'), 5000);
      await this.exited;
      clearTimeout(timer);
    }
    this.connection.dispose();
    return this.exitCode ?? null;
  }
}
