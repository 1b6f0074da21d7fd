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
import { dirname, isAbsolute, relative, sep } from 'node:path';
import { setFlagsFromString } from 'node:v8';
import { fileURLToPath, pathToFileURL } from 'node:url';
import {
  CodeActionKind,
  DidChangeConfigurationNotification,
  DidChangeWatchedFilesNotification,
  ErrorCodes,
  FileChangeType,
  LSPErrorCodes,
  ResponseError,
  TextDocumentSyncKind,
  type CancellationToken,
  type ClientCapabilities,
  type CodeAction,
  type CodeActionParams,
  type CodeLens,
  type CodeLensParams,
  type Connection,
  type Diagnostic,
  type DidChangeTextDocumentParams,
  type DidChangeWatchedFilesParams,
  type DidCloseTextDocumentParams,
  type DidOpenTextDocumentParams,
  type DocumentDiagnosticParams,
  type DocumentDiagnosticReport,
  type Hover,
  type HoverParams,
  type InitializeParams,
  type InitializeResult,
  type InlayHint,
  type InlayHintParams,
  type WorkspaceFolder,
} from 'vscode-languageserver/node';
import { TextDocument } from 'vscode-languageserver-textdocument';
import { LruCache } from '@noiselint/shared-math';
import { analyzeText, findingsAsData, readFile, type AnalyzeOptions, type FileReading, FileResult } from '../engine/api';
import type { Finding } from '../base/findings';
import { plotDataFor } from '../views/plotData';
import { hoverAt } from '../views/hover';
import { inlineHintsFor } from '../views/inlayHints';
import { firstFieldOf } from '../views/fieldAt';
import { summaryFor } from '../views/documentSummary';
import { formatExplainText } from '../views/explainFormat';
import type { Concept } from '../fields/concepts';
import type { SourceFormat } from '../parse/types';
import { LineIndex } from '../parse/lineIndex';
import { ALL_RULE_METAS, getRuleMeta } from '../rules';
import {
  EXPLAIN_REQUEST,
  FIX_ALL_KIND,
  PLOT_CHANGED_NOTIFICATION,
  PLOT_DATA_REQUEST,
  SHOW_SCHEDULE_COMMAND,
  SUMMARY_REQUEST,
  type UriParams,
} from '../base/protocol';
import type { ResolvedProject } from '../workspace/types';
import type { PartnerDocument } from '../rules/types';
import { setProjectRuleCatalog } from '../workspace/projectFile';
import { discoverFiles, isConfigFileName, isProjectFileName, projectSelects } from '../workspace/discover';
import { readTextFile, type WorkspaceFs } from '../workspace/fs';
import { roleOfSetups, type FileRole, type PairRole } from '../workspace/pairing';
import { overlayFs } from '../workspace/overlay';
import { baseName, isInside, relativePosix } from '../workspace/selection';
import { WorkspaceSession, type ProjectLookup } from '../workspace/session';
import { findingToDiagnostic, spanToRange, type PositionMapper, type OtherFile } from './convert';
import { fixAllAction, kindRequested, quickFixes, type CurrentFindings } from './codeActions';
import { ruleDocsUrl } from '../workspace/ruleDocs';
import { DEFAULT_DEBOUNCE_MS, defaultSettings, mergeSettingsIntoProject, normalizeSettings, type EditorSettings } from './settings';

const SERVER_VERSION = '0.1.0';
const SETTINGS_SECTION = 'noiselint';
const WATCH_GLOBS = ['**/*.{yaml,yml,json,jsonc,toml}', '**/noiselint.project.{yaml,json}'];
/** Files indexed per workspace folder at start-up; beyond this, pairing reads files on demand. */
const MAX_INDEXED_FILES = 20_000;
const INDEX_BATCH = 64;
/** Schedule fields, in the order the "Show noise schedule" lens looks for them. */
const SCHEDULE_FIELDS: readonly Concept[] = ['betaSchedule', 'betas', 'trainSteps', 'betaStart', 'betaEnd', 'zeroTerminalSnr', 'sigmaMax', 'sigmaMin', 'flowShift'];
/** Documents whose full reading (tree, setups, analysis) is kept for the views; others are read again. */
const RECENT_READS = 8;
/** Partner files whose documents are kept between analyses. */
const PARTNER_CACHE_ENTRIES = 64;

interface PairingFound {
  partners: PartnerDocument[];
  role?: PairRole;
  paths: string[];
}

/** How an analysis read its text: enough to read it again the same way (partners only change findings). */
type ReadOptions = Omit<AnalyzeOptions, 'partners' | 'pairRole'>;

interface Capabilities {
  pullDiagnostics: boolean;
  diagnosticRefresh: boolean;
  configuration: boolean;
  configurationDynamic: boolean;
  watchedFilesDynamic: boolean;
  workspaceFolders: boolean;
  hoverMarkdown: boolean;
  versionedEdits: boolean;
  inlayHintRefresh: boolean;
  codeLensRefresh: boolean;
}

/** One analysis of an open document, tied to the version and settings generation it used. */
interface Analyzed {
  /** Unique per computation: the pull result id. */
  seq: number;
  version: number;
  generation: number;
  text: string;
  /** How the text was read; null when it was not analysed (turned off, a project file, a failure). */
  read: ReadOptions | null;
  isDiffusionConfig: boolean;
  /** Role of the document for pairing (from its setups); null when not analysed. */
  role: FileRole | null;
  /** What the user sees: rule findings plus parse and project problems, or nothing. */
  shown: Finding[];
  diagnostics: Diagnostic[];
  /** Paths of paired files this analysis read. */
  partners: string[];
}

interface OpenDocument {
  uri: string;
  /** File-system path for file: URIs. */
  path: string | null;
  format: SourceFormat;
  doc: TextDocument;
  timer: NodeJS.Timeout | undefined;
  debounceMs: number;
  lastPublishedVersion: number;
  cache: Analyzed | undefined;
  /** The document was a diffusion config at some point: parse problems keep showing while it is broken. */
  wasConfig: boolean;
}

function uriToPath(uri: string): string | null {
  if (!uri.startsWith('file:')) return null;
  try {
    return fileURLToPath(uri);
  } catch {
    return null;
  }
}

function formatOf(languageId: string | undefined, uri: string): SourceFormat {
  if (languageId === 'json' || languageId === 'jsonc' || languageId === 'yaml' || languageId === 'toml') return languageId;
  const lower = uri.toLowerCase();
  if (lower.endsWith('.toml')) return 'toml';
  if (lower.endsWith('.jsonc')) return 'jsonc';
  if (lower.endsWith('.json')) return 'json';
  return 'yaml';
}

function errorMessage(err: unknown): string {
  return (err instanceof Error ? err.message : String(err)).split('\n')[0];
}

function requireUri(params: unknown, nested: boolean): string {
  const p = params as { textDocument?: { uri?: unknown }; uri?: unknown } | null | undefined;
  const uri = nested ? p?.textDocument?.uri : p?.uri;
  if (typeof uri !== 'string' || uri.length === 0) {
    throw new ResponseError(ErrorCodes.InvalidParams, nested ? 'params.textDocument.uri must be a string' : 'params.uri must be a string');
  }
  return uri;
}

function isPosition(p: unknown): p is { line: number; character: number } {
  const q = p as { line?: unknown; character?: unknown } | null | undefined;
  return typeof q?.line === 'number' && typeof q?.character === 'number';
}

export class NoiselintServer {
  private caps: Capabilities = {
    pullDiagnostics: false,
    diagnosticRefresh: false,
    configuration: false,
    configurationDynamic: false,
    watchedFilesDynamic: false,
    workspaceFolders: false,
    hoverMarkdown: false,
    versionedEdits: false,
    inlayHintRefresh: false,
    codeLensRefresh: false,
  };
  private readonly docs = new Map<string, OpenDocument>();
  private readonly openByPath = new Map<string, string>();
  /** File names of the open documents, by folder (the overlay's folder listings). */
  private readonly openByFolder = new Map<string, Set<string>>();
  private readonly settingsCache = new Map<string, Promise<EditorSettings>>();
  private globalSettings: EditorSettings = defaultSettings();
  /** Bumped when settings or project files change: every cached analysis is then stale. */
  private generation = 0;
  private analysisSeq = 0;
  private folders: { uri: string; path: string | null }[] = [];
  /** Projects, selection, the role index of the workspace's config files and partner readings. */
  private readonly session: WorkspaceSession;
  /**
   * The full reading of the most recently used analyses, by document URI, with the findings as
   * the engine made them (their fixes know the parse they came from, which spares code actions a
   * parse; see fix/applicable.ts).
   */
  private readonly recentReads = new LruCache<string, { seq: number; file: FileReading; shown?: Finding[] }>(RECENT_READS, RECENT_READS);
  private readonly fs: WorkspaceFs;
  /** Display path (in messages) -> absolute path, for related locations in other files. */
  private readonly displayed = new Map<string, string>();
  private shutDown = false;

  constructor(private readonly connection: Connection) {
    this.fs = overlayFs({
      textOf: (path) => {
        const uri = this.openByPath.get(path);
        return uri ? this.docs.get(uri)?.doc.getText() : undefined;
      },
      namesIn: (folder) => this.openByFolder.get(folder),
    });
    this.session = new WorkspaceSession({
      fs: this.fs,
      showPath: (abs) => this.displayPath(abs),
      knownRole: (path) => this.openRole(path),
      readingEntries: PARTNER_CACHE_ENTRIES,
    });
    // Project files are checked against the real rule ids and options.
    setProjectRuleCatalog(ALL_RULE_METAS);
  }

  listen(): void {
    const c = this.connection;
    c.onInitialize((params) => this.initialize(params));
    c.onInitialized(() => this.notifyGuard('initialized', () => this.initialized()));
    c.onShutdown(() => {
      this.shutDown = true;
      for (const od of this.docs.values()) if (od.timer) clearTimeout(od.timer);
    });
    c.onDidOpenTextDocument((p) => this.notifyGuard('didOpen', () => this.didOpen(p)));
    c.onDidChangeTextDocument((p) => this.notifyGuard('didChange', () => this.didChange(p)));
    c.onDidCloseTextDocument((p) => this.notifyGuard('didClose', () => this.didClose(p)));
    c.onDidChangeConfiguration((p) => this.notifyGuard('didChangeConfiguration', () => this.configurationChanged(p?.settings)));
    c.onDidChangeWatchedFiles((p) => this.notifyGuard('didChangeWatchedFiles', () => this.watchedFilesChanged(p)));
    c.onHover(this.guard('hover', (p: HoverParams) => this.hover(p)));
    c.onCodeAction(this.guard('codeAction', (p: CodeActionParams) => this.codeActions(p)));
    c.onCodeLens(this.guard('codeLens', (p: CodeLensParams) => this.codeLenses(p)));
    c.languages.inlayHint.on(this.guard('inlayHint', (p: InlayHintParams) => this.inlayHints(p)));
    c.languages.diagnostics.on(this.guard('diagnostic', (p: DocumentDiagnosticParams, token: CancellationToken) => this.pullDiagnostics(p, token)));
    c.onRequest(PLOT_DATA_REQUEST, this.guard(PLOT_DATA_REQUEST, (p: UriParams) => this.plotData(p)));
    c.onRequest(EXPLAIN_REQUEST, this.guard(EXPLAIN_REQUEST, (p: UriParams) => this.explain(p)));
    c.onRequest(SUMMARY_REQUEST, this.guard(SUMMARY_REQUEST, (p: UriParams) => this.summary(p)));
    c.listen();
  }

  // ---------------------------------------------------------------- robustness

  /** Every request handler: an exception becomes a ResponseError for that request only. */
  private guard<P, R>(name: string, handler: (params: P, token: CancellationToken) => R | Promise<R>) {
    return async (params: P, token: CancellationToken): Promise<R> => {
      try {
        return await handler(params, token);
      } catch (err) {
        if (err instanceof ResponseError) throw err;
        this.logError(name, err);
        throw new ResponseError(ErrorCodes.InternalError, `noiselint: ${name} failed: ${errorMessage(err)}`);
      }
    };
  }

  private notifyGuard(name: string, handler: () => unknown): void {
    try {
      const result = handler();
      if (result instanceof Promise) result.catch((err: unknown) => this.logError(name, err));
    } catch (err) {
      this.logError(name, err);
    }
  }

  private logError(name: string, err: unknown): void {
    this.connection.console.error(`noiselint: ${name} failed: ${err instanceof Error ? (err.stack ?? err.message) : String(err)}`);
  }

  // ---------------------------------------------------------------- life cycle

  private initialize(params: InitializeParams): InitializeResult {
    const cc: ClientCapabilities = params?.capabilities ?? {};
    const hoverFormats = cc.textDocument?.hover?.contentFormat ?? [];
    this.caps = {
      pullDiagnostics: !!cc.textDocument?.diagnostic,
      diagnosticRefresh: !!cc.workspace?.diagnostics?.refreshSupport,
      configuration: !!cc.workspace?.configuration,
      configurationDynamic: !!cc.workspace?.didChangeConfiguration?.dynamicRegistration,
      watchedFilesDynamic: !!cc.workspace?.didChangeWatchedFiles?.dynamicRegistration,
      workspaceFolders: !!cc.workspace?.workspaceFolders,
      hoverMarkdown: hoverFormats.includes('markdown'),
      versionedEdits: !!cc.workspace?.workspaceEdit?.documentChanges,
      inlayHintRefresh: !!cc.workspace?.inlayHint?.refreshSupport,
      codeLensRefresh: !!cc.workspace?.codeLens?.refreshSupport,
    };
    const folders: WorkspaceFolder[] = params?.workspaceFolders ?? (params?.rootUri ? [{ uri: params.rootUri, name: 'root' }] : []);
    this.folders = folders.filter((f) => typeof f?.uri === 'string').map((f) => ({ uri: f.uri, path: uriToPath(f.uri) }));
    const result: InitializeResult = {
      capabilities: {
        textDocumentSync: { openClose: true, change: TextDocumentSyncKind.Incremental },
        hoverProvider: true,
        codeActionProvider: { codeActionKinds: [CodeActionKind.QuickFix, FIX_ALL_KIND] },
        codeLensProvider: { resolveProvider: false },
        inlayHintProvider: { resolveProvider: false },
        workspace: { workspaceFolders: { supported: true, changeNotifications: true } },
      },
      serverInfo: { name: 'noiselint', version: SERVER_VERSION },
    };
    if (this.caps.pullDiagnostics) {
      result.capabilities.diagnosticProvider = { identifier: 'noiselint', interFileDependencies: true, workspaceDiagnostics: false };
    }
    return result;
  }

  private async initialized(): Promise<void> {
    const c = this.connection;
    if (this.caps.configurationDynamic) {
      await c.client.register(DidChangeConfigurationNotification.type, { section: SETTINGS_SECTION }).catch((e: unknown) => this.logError('register', e));
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
          this.folders = this.folders.filter((f) => !removed.has(f.uri));
          const added = event.added.map((f) => ({ uri: f.uri, path: uriToPath(f.uri) }));
          this.folders.push(...added);
          await this.indexFolders(added);
        }),
      );
    }
    await this.indexFolders(this.folders);
  }

  /** Scans folders for config files and records each file's role (the pairing index). */
  private async indexFolders(folders: { uri: string; path: string | null }[]): Promise<void> {
    const paths = folders.map((f) => f.path).filter((p): p is string => !!p);
    if (paths.length === 0) return;
    const progress = await this.connection.window.createWorkDoneProgress();
    progress.begin('noiselint: indexing configs', 0, 'finding files', false);
    try {
      const files: string[] = [];
      for (const folder of paths) {
        const found = discoverFiles([folder], folder, undefined, { fs: this.fs, maxFiles: MAX_INDEXED_FILES });
        files.push(...found.files);
        for (const e of found.errors) this.connection.console.warn(`noiselint: ${e}`);
      }
      for (let i = 0; i < files.length; i++) {
        if (this.shutDown) return;
        if (!this.openByPath.has(files[i])) this.session.indexFile(files[i]);
        if (i % INDEX_BATCH === INDEX_BATCH - 1) {
          progress.report(Math.round(((i + 1) / files.length) * 100), `${i + 1} of ${files.length} files`);
          await new Promise((resolve) => setImmediate(resolve));
        }
      }
      this.connection.console.info(`noiselint: indexed ${files.length} config files`);
    } finally {
      progress.done();
    }
    // Pairs may have appeared: re-check the open documents.
    this.invalidateAll(false);
  }

  // ---------------------------------------------------------------- documents

  private didOpen(params: DidOpenTextDocumentParams): void {
    const item = params?.textDocument;
    if (!item || typeof item.uri !== 'string' || typeof item.text !== 'string') throw new Error('didOpen: malformed textDocument');
    const previous = this.docs.get(item.uri);
    if (previous?.timer) clearTimeout(previous.timer);
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
    this.docs.set(item.uri, od);
    if (path) this.trackOpen(path, item.uri);
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
    if (od.timer) clearTimeout(od.timer);
    this.docs.delete(uri);
    this.settingsCache.delete(uri);
    this.recentReads.delete(uri);
    if (od.path) {
      this.untrackOpen(od.path);
      // The disk copy speaks again for pairing.
      this.session.indexFile(od.path);
      this.dependentsChanged(od.path, true);
    }
    if (!this.caps.pullDiagnostics) void this.connection.sendDiagnostics({ uri, diagnostics: [] });
  }

  private trackOpen(path: string, uri: string): void {
    this.openByPath.set(path, uri);
    const folder = dirname(path);
    let names = this.openByFolder.get(folder);
    if (!names) {
      names = new Set();
      this.openByFolder.set(folder, names);
    }
    names.add(baseName(path));
  }

  private untrackOpen(path: string): void {
    this.openByPath.delete(path);
    const folder = dirname(path);
    const names = this.openByFolder.get(folder);
    names?.delete(baseName(path));
    if (names?.size === 0) this.openByFolder.delete(folder);
  }

  /** A document's text changed: re-check it (debounced) and the files paired with it. */
  private contentChanged(od: OpenDocument, delay: number): void {
    if (od.path && isProjectFileName(baseName(od.path))) {
      this.session.projectsChanged();
      this.invalidateAll(true);
    }
    this.schedule(od, delay);
    if (od.path) this.dependentsChanged(od.path, false);
  }

  private schedule(od: OpenDocument, delay: number): void {
    if (od.timer) clearTimeout(od.timer);
    od.timer = setTimeout(() => {
      od.timer = undefined;
      this.notifyGuard('validate', () => this.validate(od));
    }, delay);
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

  private settingsFor(uri: string): Promise<EditorSettings> {
    if (!this.caps.configuration) return Promise.resolve(this.globalSettings);
    let pending = this.settingsCache.get(uri);
    if (!pending) {
      pending = this.connection.workspace.getConfiguration({ scopeUri: uri, section: SETTINGS_SECTION }).then(
        (raw: unknown) => normalizeSettings(raw),
        (err: unknown) => {
          this.logError('workspace/configuration', err);
          return defaultSettings();
        },
      );
      this.settingsCache.set(uri, pending);
    }
    return pending;
  }

  private configurationChanged(settings: unknown): void {
    if (!this.caps.configuration) {
      const section = (settings as Record<string, unknown> | null | undefined)?.[SETTINGS_SECTION];
      this.globalSettings = normalizeSettings(section ?? {});
    }
    this.settingsCache.clear();
    this.invalidateAll(true);
  }

  /** Project file for a path (editor settings are merged later); an invalid file falls back to defaults. */
  private projectFor(path: string | null): ProjectLookup {
    return this.session.projectFor(path);
  }

  private folderOf(path: string): string | null {
    let best: string | null = null;
    for (const f of this.folders) {
      if (!f.path || !isInside(f.path, path)) continue;
      if (!best || f.path.length > best.length) best = f.path;
    }
    return best;
  }

  /** The project's include / exclude, then the editor's (the project file's include takes precedence). */
  private selected(path: string | null, project: ResolvedProject, settings: EditorSettings): boolean {
    const base = path ? this.folderOf(path) : null;
    return this.session.selects(path, project, { base, include: settings.files.include, exclude: settings.files.exclude });
  }

  /** Bumps the generation and re-checks every open document (refreshing pulled diagnostics). */
  private invalidateAll(settingsChanged: boolean): void {
    this.generation++;
    if (settingsChanged) this.session.projectsChanged();
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

  /** An open document's role: from its current analysis, else read from its open text. */
  private openRole(path: string): FileRole | undefined {
    const uri = this.openByPath.get(path);
    const od = uri ? this.docs.get(uri) : undefined;
    if (!od) return undefined;
    if (od.cache?.role && od.cache.version === od.doc.version) return od.cache.role;
    return this.session.readRole(path);
  }

  private pairingFor(path: string, project: ResolvedProject): PairingFound {
    try {
      const found = this.session.partnersOf(path, project);
      return { partners: found.partners, role: found.pairRole, paths: found.paths };
    } catch (err) {
      this.logError('pairing', err);
      return { partners: [], paths: [] };
    }
  }

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
      if (!isConfigFileName(name) || this.openByPath.has(path)) continue;
      this.session.fileChanged(path);
      if (change.type !== FileChangeType.Deleted) this.session.indexFile(path);
      this.dependentsChanged(path, change.type !== FileChangeType.Changed);
    }
    if (projectChanged) {
      this.session.projectsChanged();
      this.invalidateAll(true);
    }
  }

  // ---------------------------------------------------------------- analysis

  private async analyze(od: OpenDocument): Promise<Analyzed | null> {
    const settings = await this.settingsFor(od.uri);
    if (this.docs.get(od.uri) !== od) return null;
    od.debounceMs = settings.debounceMs;
    const version = od.doc.version;
    if (od.cache && od.cache.version === version && od.cache.generation === this.generation) return od.cache;
    const analyzed = this.compute(od, settings);
    od.cache = analyzed;
    if (od.path && analyzed.role) {
      const role = analyzed.role;
      const before = this.session.noteRole(od.path, role);
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
    if (!this.selected(od.path, fileProject, settings)) return empty;
    const pairing = od.path ? this.pairingFor(od.path, project) : { partners: [], paths: [] as string[] };
    const options: AnalyzeOptions = {
      path: od.path ?? od.uri,
      format: od.format,
      project,
      partners: pairing.partners,
      pairRole: pairing.role,
      limits: settings.limits,
    };
    let file: FileResult;
    try {
      file = analyzeText(text, options);
    } catch (err) {
      this.logError('analysis', err);
      const finding: Finding = {
        rule: 'internal-error',
        severity: 'error',
        message: `noiselint could not check this file: ${errorMessage(err)}`,
        span: { start: 0, end: 0 },
        documentIndex: 0,
        related: [],
        fixes: [],
      };
      return { ...empty, shown: [finding], diagnostics: [this.toDiagnostic(od, finding, settings, base.version)] };
    }
    if (file.isDiffusionConfig) od.wasConfig = true;
    const shown = this.visibleFindings(file, problem);
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

  /** The engine's findings (rules and parse errors), plus a project-file problem on config files. */
  private visibleFindings(file: FileResult, projectProblem: string | null): Finding[] {
    if (!projectProblem || !file.isDiffusionConfig) return file.findings;
    const problem: Finding = {
      rule: 'project-file',
      severity: 'warning',
      message: `${projectProblem}; checking with the built-in defaults`,
      span: { start: 0, end: 0 },
      documentIndex: 0,
      related: [],
      fixes: [],
    };
    return [problem, ...file.findings];
  }

  /** A project file shows its own validation problem (if any) and nothing else. */
  private projectFileAnalysis(od: OpenDocument, base: { seq: number; version: number; generation: number; text: string }): Analyzed {
    const { problem } = this.projectFor(od.path);
    const none: Analyzed = { ...base, read: null, isDiffusionConfig: false, role: null, shown: [], diagnostics: [], partners: [] };
    if (!problem) return none;
    const finding: Finding = { rule: 'project-file', severity: 'error', message: problem, span: { start: 0, end: 0 }, documentIndex: 0, related: [], fixes: [] };
    return { ...none, shown: [finding], diagnostics: [this.toDiagnostic(od, finding, defaultSettings(), base.version)] };
  }

  /**
   * The full reading (tree, setups, analysis) behind an analysis: kept for recent ones, otherwise
   * read again from the same text with the same options (the findings are not recomputed).
   */
  private readOf(uri: string, analyzed: Analyzed): FileReading | null {
    if (!analyzed.read) return null;
    const recent = this.recentReads.get(uri);
    if (recent && recent.seq === analyzed.seq) return recent.file;
    const file = readFile(analyzed.text, analyzed.read);
    this.recentReads.set(uri, { seq: analyzed.seq, file });
    return file;
  }

  /** The findings of an analysis, as the engine made them while they are recent. */
  private findingsOf(uri: string, analyzed: Analyzed): Finding[] {
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
        otherFile: (path) => this.otherFile(path),
      },
      od.uri,
    );
  }

  /** How messages name another file: relative to its workspace folder (remembered for links back). */
  private displayPath(abs: string): string {
    const folder = this.folderOf(abs);
    const shown = folder ? relativePosix(folder, abs) : abs;
    this.displayed.set(shown, abs);
    return shown;
  }

  private otherFile(shown: string): OtherFile | null {
    const path = this.displayed.get(shown) ?? (isAbsolute(shown) ? shown : null);
    if (!path) return null;
    const uri = this.openByPath.get(path);
    const od = uri ? this.docs.get(uri) : undefined;
    if (od) return { uri: od.uri, mapper: od.doc };
    const read = readTextFile(this.fs, path);
    if (!read.ok) return null;
    let fileUri: string;
    try {
      fileUri = pathToFileURL(path).href;
    } catch {
      return null;
    }
    return { uri: fileUri, mapper: new LineIndex(read.text) };
  }

  /** The analysis of an open document's current version. */
  private async current(uri: string): Promise<{ od: OpenDocument; analyzed: Analyzed } | null> {
    const od = this.docs.get(uri);
    if (!od) return null;
    const analyzed = await this.analyze(od);
    if (!analyzed || this.docs.get(uri) !== od) return null;
    return { od, analyzed };
  }

  /** An open document's analysis, or a file on disk read (not kept) for the custom requests. */
  private async fileFor(uri: string): Promise<{ file: FileReading | null; shown: Finding[]; version: number | null } | null> {
    const cur = await this.current(uri);
    if (cur) return { file: this.readOf(uri, cur.analyzed), shown: cur.analyzed.shown, version: cur.analyzed.version };
    const path = uriToPath(uri);
    if (!path) return null;
    const settings = await this.settingsFor(uri);
    const { project: fileProject } = this.projectFor(path);
    const project = mergeSettingsIntoProject(fileProject, settings);
    const read = readTextFile(this.fs, path, project.limits.maxFileBytes);
    if (!read.ok) return null;
    const pairing = this.pairingFor(path, project);
    const file = analyzeText(read.text, { path, project, partners: pairing.partners, pairRole: pairing.role, limits: settings.limits });
    return { file, shown: this.visibleFindings(file, null), version: null };
  }

  // ---------------------------------------------------------------- requests

  private async pullDiagnostics(params: DocumentDiagnosticParams, token: CancellationToken): Promise<DocumentDiagnosticReport> {
    const uri = requireUri(params, true);
    const od = this.docs.get(uri);
    if (!od) return { kind: 'full', items: [] };
    const analyzed = await this.analyze(od);
    if (token?.isCancellationRequested) {
      throw new ResponseError(LSPErrorCodes.ServerCancelled, 'cancelled: the document changed', { retriggerRequest: true });
    }
    if (!analyzed) return { kind: 'full', items: [] };
    const resultId = `${analyzed.version}:${analyzed.seq}`;
    if (params.previousResultId === resultId) return { kind: 'unchanged', resultId };
    return { kind: 'full', resultId, items: analyzed.diagnostics };
  }

  private async hover(params: HoverParams): Promise<Hover | null> {
    const uri = requireUri(params, true);
    if (!isPosition(params.position)) throw new ResponseError(ErrorCodes.InvalidParams, 'params.position must be a position');
    const cur = await this.current(uri);
    const file = cur && this.readOf(uri, cur.analyzed);
    if (!cur || !file) return null;
    const offset = cur.od.doc.offsetAt(params.position);
    const format = this.caps.hoverMarkdown ? 'markdown' : 'plaintext';
    const hover = hoverAt(file, offset, format);
    if (!hover) return null;
    return { contents: { kind: format, value: hover.text }, range: spanToRange(cur.od.doc, hover.span) };
  }

  private async codeActions(params: CodeActionParams): Promise<CodeAction[]> {
    const uri = requireUri(params, true);
    const cur = await this.current(uri);
    if (!cur) return [];
    const current: CurrentFindings = {
      uri,
      version: cur.analyzed.version,
      text: cur.analyzed.text,
      mapper: cur.od.doc,
      findings: this.findingsOf(uri, cur.analyzed),
    };
    const only = Array.isArray(params.context?.only) ? params.context.only : undefined;
    const actions: CodeAction[] = [];
    if (kindRequested(only, CodeActionKind.QuickFix)) actions.push(...quickFixes(params, current, this.caps.versionedEdits));
    if (kindRequested(only, FIX_ALL_KIND)) {
      const all = fixAllAction(current, this.caps.versionedEdits);
      if (all) actions.push(all);
    }
    return actions;
  }

  private async inlayHints(params: InlayHintParams): Promise<InlayHint[]> {
    const uri = requireUri(params, true);
    const cur = await this.current(uri);
    const file = cur && this.readOf(uri, cur.analyzed);
    if (!cur || !file) return [];
    const doc = cur.od.doc;
    const range = params.range;
    const from = range ? doc.offsetAt(range.start) : 0;
    const to = range ? doc.offsetAt(range.end) : Infinity;
    return inlineHintsFor(file)
      .filter((h) => h.offset >= from && h.offset <= to)
      .map((h) => ({ position: doc.positionAt(h.offset), label: h.label, tooltip: h.tooltip, paddingLeft: true }));
  }

  private async codeLenses(params: CodeLensParams): Promise<CodeLens[]> {
    const uri = requireUri(params, true);
    const cur = await this.current(uri);
    if (!cur?.analyzed.isDiffusionConfig) return [];
    const file = this.readOf(uri, cur.analyzed);
    if (!file) return [];
    const first = firstFieldOf(file, SCHEDULE_FIELDS);
    if (!first) return [];
    return [
      {
        range: spanToRange(cur.od.doc, first.span),
        command: { title: 'Show noise schedule', command: SHOW_SCHEDULE_COMMAND, arguments: [uri] },
      },
    ];
  }

  private async plotData(params: UriParams) {
    const uri = requireUri(params, false);
    const found = await this.fileFor(uri);
    if (!found?.file) return null;
    return plotDataFor(found.file, uri, found.version);
  }

  private async explain(params: UriParams): Promise<{ text: string }> {
    const uri = requireUri(params, false);
    const found = await this.fileFor(uri);
    if (!found) throw new ResponseError(ErrorCodes.InvalidParams, `${uri}: not an open document or a readable file`);
    if (!found.file) return { text: 'noiselint is turned off for this file (setting noiselint.enable or files.include / files.exclude).\n' };
    return { text: formatExplainText(found.file) };
  }

  private async summary(params: UriParams) {
    const uri = requireUri(params, false);
    const found = await this.fileFor(uri);
    return summaryFor(found?.file ? { ...found.file, findings: found.shown } : null, uri);
  }
}

/** Rule ids (and `parse-error`) have a documentation page; internal codes do not. */
function isRuleId(code: string): boolean {
  return getRuleMeta(code) !== undefined;
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
