/**
 * The language server: a thin adapter from LSP requests to core calls. It keeps the open
 * documents, their settings and a role index of the workspace's config files; every analysis goes
 * through `analyzeText` / `readFile` and every number through the core helpers.
 *
 * Memory: per open document the server keeps its text, the findings (as plain data) and
 * diagnostics of its last analysis and the document's role, not the located tree, setups and
 * schedule numbers behind them. Those are kept for the few most recently analysed or asked-about
 * documents (RECENT_READS) and read again from the analysed text when a view (hover, hints, lens,
 * plot, explain, summary) asks for an older one; schedule curves come from shared-math's cache
 * either way.
 *
 * Diagnostics are pushed (debounced) unless the client pulls them. Never stale: a result is only
 * published when it was computed from the document's current version, and never after a newer one.
 */
import { dirname } from 'node:path';
import { setFlagsFromString } from 'node:v8';
import {
  CodeActionKind,
  DidChangeConfigurationNotification,
  DidChangeWatchedFilesNotification,
  FileChangeType,
  TextDocumentSyncKind,
  type CancellationToken,
  type ClientCapabilities,
  type CodeActionParams,
  type CodeLensParams,
  type Connection,
  type Diagnostic,
  type DidChangeTextDocumentParams,
  type DidChangeWatchedFilesParams,
  type DidCloseTextDocumentParams,
  type DidOpenTextDocumentParams,
  type DocumentDiagnosticParams,
  type HoverParams,
  type InitializeParams,
  type InitializeResult,
  type InlayHintParams,
  type WorkspaceFolder,
} from 'vscode-languageserver/node';
import { TextDocument } from 'vscode-languageserver-textdocument';
import { LruCache } from '@noiselint/shared-math';
import type { Finding } from '../base/findings';
import {
  EXPLAIN_REQUEST,
  FIX_ALL_KIND,
  PLOT_CHANGED_NOTIFICATION,
  PLOT_DATA_REQUEST,
  SUMMARY_REQUEST,
  RUN_RESCALE_REQUEST,
  type RunRescaleParams,
  type UriParams,
} from '../base/protocol';
import { analyzeRead, analyzeText, findingsAsData, readFile, type AnalyzeOptions, type FileReading, type FileResult } from '../engine/api';
import { VERSION } from '../base/version';
import { isConfigFileName, isProjectFileName } from '../workspace/discover';
import { readTextFile } from '../workspace/fs';
import { roleOfSetups } from '../workspace/pairing';
import { ruleDocsUrl } from '../workspace/ruleDocs';
import { baseName } from '../workspace/selection';
import type { ProjectLookup } from '../workspace/session';
import { inheritanceFrom } from '../setup/inherit';
import { readRun, type RunRead } from '../workspace/run';
import { runRescaleRequest } from './runAction';
import { NO_CAPABILITIES, readCapabilities, type Capabilities } from './capabilities';
import { findingToDiagnostic, type PositionMapper } from './convert';
import { cancelPending, OpenDocuments, type Analyzed, type OpenDocument } from './documents';
import * as requests from './requests';
import {
  DEFAULT_DEBOUNCE_MS,
  defaultSettings,
  mergeSettingsIntoProject,
  PushedSettings,
  SETTINGS_SECTION,
  settingsFromClient,
  type EditorSettings,
} from './settings';
import { errorMessage, fileFinding, formatOf, isRuleId, notificationGuard, requestGuard, requireUri, uriToPath, visibleFindings } from './util';
import { WorkspaceIndex } from './workspaceIndex';

const WATCH_GLOBS = ['**/*.{yaml,yml,json,jsonc,toml}', '**/noiselint.project.{yaml,yml,json}'];
/** Documents whose full reading (tree, setups, analysis) is kept for the views; others are read again. */
const RECENT_READS = 8;

export class NoiselintServer {
  caps: Capabilities = NO_CAPABILITIES;
  readonly docs = new OpenDocuments();
  private readonly settingsCache = new Map<string, Promise<EditorSettings>>();
  /** Settings the client pushed (initializationOptions, didChangeConfiguration). */
  private readonly pushed = new PushedSettings();
  /** Bumped when settings or project files change: every cached analysis is then stale. */
  private generation = 0;
  private analysisSeq = 0;
  /** Workspace folders, the session (projects, roles, partners) and how other files are named. */
  private readonly workspace: WorkspaceIndex;
  /**
   * The full reading of the most recently used analyses, by document URI, with the findings as
   * the engine made them (their fixes know the parse they came from, which spares code actions a
   * parse; see fix/applicable.ts).
   */
  private readonly recentReads = new LruCache<string, { seq: number; file: FileReading; shown?: Finding[] }>(RECENT_READS, RECENT_READS);
  private shutDown = false;

  constructor(private readonly connection: Connection) {
    this.workspace = new WorkspaceIndex(this.docs);
  }

  listen(): void {
    const c = this.connection;
    c.onInitialize((params) => this.initialize(params));
    c.onInitialized(() => this.notifyGuard('initialized', () => this.initialized()));
    c.onShutdown(() => {
      this.shutDown = true;
      for (const od of this.docs.values()) cancelPending(od.timer);
    });
    c.onDidOpenTextDocument((p) => this.notifyGuard('didOpen', () => this.didOpen(p)));
    c.onDidChangeTextDocument((p) => this.notifyGuard('didChange', () => this.didChange(p)));
    c.onDidCloseTextDocument((p) => this.notifyGuard('didClose', () => this.didClose(p)));
    c.onDidChangeConfiguration((p) => this.notifyGuard('didChangeConfiguration', () => this.configurationChanged(p?.settings)));
    c.onDidChangeWatchedFiles((p) => this.notifyGuard('didChangeWatchedFiles', () => this.watchedFilesChanged(p)));
    c.onHover(this.guard('hover', (p: HoverParams) => requests.hover(this, p)));
    c.onCodeAction(this.guard('codeAction', (p: CodeActionParams) => requests.codeActions(this, p)));
    c.onCodeLens(this.guard('codeLens', (p: CodeLensParams) => requests.codeLenses(this, p)));
    c.languages.inlayHint.on(this.guard('inlayHint', (p: InlayHintParams) => requests.inlayHints(this, p)));
    c.languages.diagnostics.on(
      this.guard('diagnostic', (p: DocumentDiagnosticParams, token: CancellationToken) => requests.pullDiagnostics(this, p, token)),
    );
    c.onRequest(
      PLOT_DATA_REQUEST,
      this.guard(PLOT_DATA_REQUEST, (p: UriParams) => requests.plotData(this, p)),
    );
    c.onRequest(
      EXPLAIN_REQUEST,
      this.guard(EXPLAIN_REQUEST, (p: UriParams) => requests.explain(this, p)),
    );
    c.onRequest(
      SUMMARY_REQUEST,
      this.guard(SUMMARY_REQUEST, (p: UriParams) => requests.summary(this, p)),
    );
    c.onRequest(
      RUN_RESCALE_REQUEST,
      this.guard(RUN_RESCALE_REQUEST, (p: RunRescaleParams) => runRescaleRequest(this, p)),
    );
    c.listen();
  }

  // ---------------------------------------------------------------- robustness

  private readonly guard = requestGuard((name, err) => this.logError(name, err));
  private readonly notifyGuard = notificationGuard((name, err) => this.logError(name, err));

  private logError(name: string, err: unknown): void {
    this.connection.console.error(`noiselint: ${name} failed: ${err instanceof Error ? (err.stack ?? err.message) : String(err)}`);
  }

  // ---------------------------------------------------------------- life cycle

  private initialize(params: InitializeParams): InitializeResult {
    const cc: ClientCapabilities = params?.capabilities ?? {};
    this.caps = readCapabilities(cc, params);
    this.pushed.initialize(params?.initializationOptions);
    const folders: WorkspaceFolder[] = params?.workspaceFolders ?? (params?.rootUri ? [{ uri: params.rootUri, name: 'root' }] : []);
    this.workspace.folders = folders.filter((f) => typeof f?.uri === 'string').map((f) => ({ uri: f.uri, path: uriToPath(f.uri) }));
    const result: InitializeResult = {
      capabilities: {
        textDocumentSync: { openClose: true, change: TextDocumentSyncKind.Incremental },
        hoverProvider: true,
        codeActionProvider: { codeActionKinds: [CodeActionKind.QuickFix, FIX_ALL_KIND] },
        codeLensProvider: { resolveProvider: false },
        inlayHintProvider: { resolveProvider: false },
        workspace: { workspaceFolders: { supported: true, changeNotifications: true } },
      },
      serverInfo: { name: 'noiselint', version: VERSION },
    };
    if (this.caps.pullDiagnostics) {
      result.capabilities.diagnosticProvider = { identifier: 'noiselint', interFileDependencies: true, workspaceDiagnostics: false };
    }
    return result;
  }

  private async initialized(): Promise<void> {
    const c = this.connection;
    if (this.caps.configurationDynamic) {
      await c.client
        .register(DidChangeConfigurationNotification.type, { section: SETTINGS_SECTION })
        .catch((e: unknown) => this.logError('register', e));
    }
    if (this.caps.watchedFilesDynamic) {
      await c.client
        .register(DidChangeWatchedFilesNotification.type, { watchers: WATCH_GLOBS.map((globPattern) => ({ globPattern })) })
        .catch((e: unknown) => this.logError('register', e));
    }
    if (this.caps.workspaceFolders) {
      c.workspace.onDidChangeWorkspaceFolders((event) =>
        this.notifyGuard('didChangeWorkspaceFolders', async () => {
          const removed = new Set(event.removed.map((f) => f.uri));
          this.workspace.folders = this.workspace.folders.filter((f) => !removed.has(f.uri));
          const added = event.added.map((f) => ({ uri: f.uri, path: uriToPath(f.uri) }));
          this.workspace.folders.push(...added);
          await this.indexFolders(added);
        }),
      );
    }
    await this.indexFolders(this.workspace.folders);
  }

  // ---------------------------------------------------------------- documents

  private didOpen(params: DidOpenTextDocumentParams): void {
    const item = params?.textDocument;
    if (!item || typeof item.uri !== 'string' || typeof item.text !== 'string') throw new Error('didOpen: malformed textDocument');
    const previous = this.docs.get(item.uri);
    cancelPending(previous?.timer);
    const path = uriToPath(item.uri);
    const od: OpenDocument = {
      uri: item.uri,
      path,
      format: formatOf(item.languageId, item.uri),
      doc: TextDocument.create(item.uri, item.languageId ?? 'yaml', typeof item.version === 'number' ? item.version : 0, item.text),
      timer: undefined,
      debounceMs: DEFAULT_DEBOUNCE_MS,
      lastPublishedVersion: -Infinity,
      cache: undefined,
      wasConfig: false,
    };
    this.docs.add(od);
    this.contentChanged(od, 0);
  }

  private didChange(params: DidChangeTextDocumentParams): void {
    const uri = requireUri(params, true);
    const od = this.docs.get(uri);
    if (!od) return;
    const changes = Array.isArray(params.contentChanges) ? params.contentChanges : [];
    const version = typeof params.textDocument.version === 'number' ? params.textDocument.version : od.doc.version + 1;
    od.doc = TextDocument.update(od.doc, changes, version);
    this.contentChanged(od, od.debounceMs);
  }

  private didClose(params: DidCloseTextDocumentParams): void {
    const uri = requireUri(params, true);
    const od = this.docs.get(uri);
    if (!od) return;
    cancelPending(od.timer);
    this.docs.remove(od);
    this.settingsCache.delete(uri);
    this.recentReads.delete(uri);
    if (od.path) {
      // The disk copy speaks again for pairing.
      this.workspace.session.indexFile(od.path);
      this.dependentsChanged(od.path, true);
    }
    if (!this.caps.pullDiagnostics) void this.connection.sendDiagnostics({ uri, diagnostics: [] });
  }

  /** A document's text changed: re-check it (debounced) and the files paired with it. */
  private contentChanged(od: OpenDocument, delay: number): void {
    if (od.path && isProjectFileName(baseName(od.path))) {
      this.workspace.session.projectsChanged();
      this.invalidateAll(true);
    }
    this.schedule(od, delay);
    if (od.path) this.dependentsChanged(od.path, false);
  }

  private schedule(od: OpenDocument, delay: number): void {
    cancelPending(od.timer);
    const run = () => {
      od.timer = undefined;
      this.notifyGuard('validate', () => this.validate(od));
    };
    // No quiet period wanted: run after the pending I/O, without a timer's minimum delay.
    od.timer = delay <= 0 ? setImmediate(run) : setTimeout(run, delay);
  }

  /** Analyses the current version; publishes it unless a newer version arrived meanwhile. */
  private async validate(od: OpenDocument): Promise<void> {
    if (this.docs.get(od.uri) !== od || this.shutDown) return;
    const analyzed = await this.analyze(od);
    if (!analyzed || this.docs.get(od.uri) !== od || analyzed.version !== od.doc.version) return;
    if (!this.caps.pullDiagnostics) this.publish(od, analyzed);
    if (analyzed.isDiffusionConfig || od.wasConfig) {
      void this.connection.sendNotification(PLOT_CHANGED_NOTIFICATION, { uri: od.uri });
    }
  }

  private publish(od: OpenDocument, analyzed: Analyzed): void {
    // Diagnostics for version n are never sent after those for a newer version.
    if (analyzed.version < od.lastPublishedVersion) return;
    od.lastPublishedVersion = analyzed.version;
    void this.connection.sendDiagnostics({ uri: od.uri, version: analyzed.version, diagnostics: analyzed.diagnostics });
  }

  // ---------------------------------------------------------------- settings and projects

  settingsFor(uri: string): Promise<EditorSettings> {
    let pending = this.settingsCache.get(uri);
    if (!pending) {
      const ask = this.caps.configuration ? () => this.connection.workspace.getConfiguration({ scopeUri: uri, section: SETTINGS_SECTION }) : null;
      pending = settingsFromClient(ask, this.pushed, (err) => this.logError('workspace/configuration', err));
      this.settingsCache.set(uri, pending);
    }
    return pending;
  }

  private configurationChanged(settings: unknown): void {
    this.pushed.changed(settings);
    this.settingsCache.clear();
    this.invalidateAll(true);
  }

  /** Project file for a path (editor settings are merged later); an invalid file falls back to defaults. */
  private projectFor(path: string | null): ProjectLookup {
    return this.workspace.session.projectFor(path);
  }

  /** Scans folders for config files and records each file's role, then re-checks the open documents. */
  private async indexFolders(folders: { uri: string; path: string | null }[]): Promise<void> {
    if (!folders.some((f) => f.path)) return;
    const progress = await this.connection.window.createWorkDoneProgress();
    progress.begin('noiselint: indexing configs', 0, 'finding files', false);
    try {
      const count = await this.workspace.scan(folders, {
        report: (done, total) => progress.report(Math.round((done / total) * 100), `${done} of ${total} files`),
        warn: (message) => this.connection.console.warn(`noiselint: ${message}`),
        stopped: () => this.shutDown,
      });
      if (count === null) return;
      this.connection.console.info(`noiselint: indexed ${count} config files`);
    } finally {
      progress.done();
    }
    // Pairs may have appeared: re-check the open documents.
    this.invalidateAll(false);
  }

  /** Bumps the generation and re-checks every open document (refreshing pulled diagnostics). */
  private invalidateAll(settingsChanged: boolean): void {
    this.generation++;
    if (settingsChanged) this.workspace.session.projectsChanged();
    for (const od of this.docs.values()) {
      od.cache = undefined;
      this.schedule(od, 0);
    }
    this.refreshClient();
  }

  private refreshClient(): void {
    if (this.caps.pullDiagnostics && this.caps.diagnosticRefresh) {
      this.connection.languages.diagnostics.refresh().catch((e: unknown) => this.logError('diagnostic refresh', e));
    }
    if (this.caps.inlayHintRefresh) this.connection.languages.inlayHint.refresh().catch(() => undefined);
    if (this.caps.codeLensRefresh) void this.connection.sendRequest('workspace/codeLens/refresh').catch(() => undefined);
  }

  // ---------------------------------------------------------------- pairing

  /**
   * `path` changed (edited, saved, created or deleted): re-check the open documents paired with
   * it, and, when files came or went, the open documents of its folder (auto-pairing may change).
   */
  private dependentsChanged(path: string, folderToo: boolean): void {
    const folder = dirname(path);
    let any = false;
    for (const od of this.docs.values()) {
      if (od.path === null || od.path === path) continue;
      const paired = od.cache?.partners.includes(path) ?? false;
      if (paired || (folderToo && dirname(od.path) === folder)) {
        od.cache = undefined;
        this.schedule(od, od.debounceMs);
        any = true;
      }
    }
    if (any && this.caps.pullDiagnostics) this.refreshClient();
  }

  private watchedFilesChanged(params: DidChangeWatchedFilesParams): void {
    const changes = Array.isArray(params?.changes) ? params.changes : [];
    let projectChanged = false;
    for (const change of changes) {
      const path = typeof change?.uri === 'string' ? uriToPath(change.uri) : null;
      if (!path) continue;
      const name = baseName(path);
      if (isProjectFileName(name)) {
        projectChanged = true;
        continue;
      }
      if (!isConfigFileName(name) || this.docs.isOpen(path)) continue;
      this.workspace.session.fileChanged(path);
      if (change.type !== FileChangeType.Deleted) this.workspace.session.indexFile(path);
      this.dependentsChanged(path, change.type !== FileChangeType.Changed);
    }
    if (projectChanged) {
      this.workspace.session.projectsChanged();
      this.invalidateAll(true);
    }
  }

  // ---------------------------------------------------------------- analysis

  async analyze(od: OpenDocument): Promise<Analyzed | null> {
    const settings = await this.settingsFor(od.uri);
    if (this.docs.get(od.uri) !== od) return null;
    od.debounceMs = settings.debounceMs;
    const version = od.doc.version;
    if (od.cache && od.cache.version === version && od.cache.generation === this.generation) return od.cache;
    const analyzed = this.compute(od, settings);
    od.cache = analyzed;
    if (od.path && analyzed.role) {
      const role = analyzed.role;
      const before = this.workspace.session.noteRole(od.path, role);
      // A file that became (or stopped being) a training or sampling file may change the folder's pairs.
      if (before !== undefined && before !== role) this.dependentsChanged(od.path, true);
    }
    return analyzed;
  }

  private compute(od: OpenDocument, settings: EditorSettings): Analyzed {
    const text = od.doc.getText();
    const base = { seq: ++this.analysisSeq, version: od.doc.version, generation: this.generation, text };
    const mapper: PositionMapper = od.doc;
    const empty: Analyzed = { ...base, read: null, isDiffusionConfig: false, role: null, shown: [], diagnostics: [], partners: [] };
    if (!settings.enable) return empty;
    if (od.path && isProjectFileName(baseName(od.path))) return this.projectFileAnalysis(od, base);
    const { project: fileProject, problem } = this.projectFor(od.path);
    const project = mergeSettingsIntoProject(fileProject, settings);
    if (!this.workspace.selected(od.path, fileProject, settings)) return empty;
    // Read this version once, without partners: its role feeds pairing (instead of pairing
    // reading the document again), then the rules run on the same reading.
    const readOptions: AnalyzeOptions = { path: od.path ?? od.uri, format: od.format, project, limits: settings.limits };
    let reading: FileReading | null = null;
    try {
      reading = readFile(text, readOptions);
      if (od.path) od.ownRole = { version: base.version, role: roleOfSetups(reading.documents.map((d) => d.setup)) };
    } catch {
      reading = null; // analyzeText below reports it
    }
    const pairing = od.path
      ? this.workspace.pairingFor(od.path, project, (err) => this.logError('pairing', err))
      : { partners: [], paths: [] as string[] };
    const options: AnalyzeOptions = {
      path: od.path ?? od.uri,
      format: od.format,
      project,
      partners: pairing.partners,
      pairRole: pairing.role,
      // Kept with the reading: a document read again for the views takes the same partner values.
      inherit: inheritanceFrom(pairing.partners, pairing.role),
      limits: settings.limits,
    };
    let file: FileResult;
    try {
      file = reading ? analyzeRead(reading, options) : analyzeText(text, options);
    } catch (err) {
      this.logError('analysis', err);
      const finding = fileFinding('internal-error', 'error', `noiselint could not check this file: ${errorMessage(err)}`);
      return { ...empty, shown: [finding], diagnostics: [this.toDiagnostic(od, finding, settings, base.version)] };
    }
    if (file.isDiffusionConfig) od.wasConfig = true;
    const shown = visibleFindings(file, problem);
    this.recentReads.set(od.uri, { seq: base.seq, file, shown });
    const { partners: _partners, pairRole: _pairRole, ...read } = options;
    return {
      ...base,
      read,
      isDiffusionConfig: file.isDiffusionConfig,
      role: roleOfSetups(file.documents.map((d) => d.setup)),
      shown: findingsAsData(shown),
      diagnostics: shown.map((f) => this.toDiagnostic(od, f, settings, base.version, mapper)),
      partners: pairing.paths,
    };
  }

  /** A project file shows its own validation problem (if any) and nothing else. */
  private projectFileAnalysis(od: OpenDocument, base: { seq: number; version: number; generation: number; text: string }): Analyzed {
    const { problem } = this.projectFor(od.path);
    const none: Analyzed = { ...base, read: null, isDiffusionConfig: false, role: null, shown: [], diagnostics: [], partners: [] };
    if (!problem) return none;
    const finding = fileFinding('project-file', 'error', problem);
    return { ...none, shown: [finding], diagnostics: [this.toDiagnostic(od, finding, defaultSettings(), base.version)] };
  }

  /**
   * The full reading (tree, setups, analysis) behind an analysis: kept for recent ones, otherwise
   * read again from the same text with the same options (the findings are not recomputed).
   */
  readOf(uri: string, analyzed: Analyzed): FileReading | null {
    if (!analyzed.read) return null;
    const recent = this.recentReads.get(uri);
    if (recent && recent.seq === analyzed.seq) return recent.file;
    const file = readFile(analyzed.text, analyzed.read);
    this.recentReads.set(uri, { seq: analyzed.seq, file });
    return file;
  }

  /** The findings of an analysis, as the engine made them while they are recent. */
  findingsOf(uri: string, analyzed: Analyzed): Finding[] {
    const recent = this.recentReads.get(uri);
    return recent?.seq === analyzed.seq && recent.shown ? recent.shown : analyzed.shown;
  }

  private toDiagnostic(od: OpenDocument, finding: Finding, settings: EditorSettings, version: number, mapper: PositionMapper = od.doc): Diagnostic {
    return findingToDiagnostic(
      finding,
      {
        mapper,
        version,
        docsUrl: (rule) => (isRuleId(rule) ? ruleDocsUrl(rule, settings.docsBaseUrl) : null),
        otherFile: (path) => this.workspace.otherFile(path),
      },
      od.uri,
    );
  }

  /** The run of these files for the run rescale, read through the session (open documents' text). */
  readRun(paths: string[]): RunRead {
    return readRun(paths, this.workspace.session, (p) => this.workspace.displayPath(p));
  }

  /** The analysis of an open document's current version. */
  async current(uri: string): Promise<{ od: OpenDocument; analyzed: Analyzed } | null> {
    const od = this.docs.get(uri);
    if (!od) return null;
    const analyzed = await this.analyze(od);
    if (!analyzed || this.docs.get(uri) !== od) return null;
    return { od, analyzed };
  }

  /** An open document's analysis, or a file on disk read (not kept) for the custom requests. */
  async fileFor(uri: string): Promise<{ file: FileReading | null; shown: Finding[]; version: number | null } | null> {
    const cur = await this.current(uri);
    if (cur) return { file: this.readOf(uri, cur.analyzed), shown: cur.analyzed.shown, version: cur.analyzed.version };
    const path = uriToPath(uri);
    if (!path) return null;
    const settings = await this.settingsFor(uri);
    const { project: fileProject } = this.projectFor(path);
    const project = mergeSettingsIntoProject(fileProject, settings);
    const read = readTextFile(this.workspace.session.fs, path, project.limits.maxFileBytes);
    if (!read.ok) return null;
    const pairing = this.workspace.pairingFor(path, project, (err) => this.logError('pairing', err));
    const file = analyzeText(read.text, { path, project, partners: pairing.partners, pairRole: pairing.role, limits: settings.limits });
    return { file, shown: visibleFindings(file, null), version: null };
  }
}

/**
 * How far V8 lets the old generation grow past the live heap before the next full collection, in
 * percent. Left to itself V8 lets a busy process grow to several times its live size (up to 4x)
 * between full collections, and does not give the memory back soon after. A language server runs
 * for hours beside the editor and holds little per open document (its text and findings), so it
 * keeps the heap near its live size; the cost is a few more (short) full collections during bursts
 * such as opening thousands of files (bench/RESULTS.md, (d)).
 */
export const SERVER_HEAP_GROWING_PERCENT = 30;

export function startServer(connection: Connection): NoiselintServer {
  // Process-wide: startServer runs in the server's own process (`noiselint lsp`).
  setFlagsFromString(`--heap-growing-percent=${SERVER_HEAP_GROWING_PERCENT}`);
  const server = new NoiselintServer(connection);
  server.listen();
  return server;
}
