/**
 * The server's view of its workspace: the workspace folders, the shared session (projects,
 * selection, each config file's role, partner documents) over an overlay in which open documents
 * win over the disk, and how messages name other files (relative to their workspace folder).
 */
import { isAbsolute } from 'node:path';
import { pathToFileURL } from 'node:url';
import { LineIndex } from '../parse/lineIndex';
import type { PartnerDocument } from '../rules/types';
import { discoverFiles } from '../workspace/discover';
import { readTextFile } from '../workspace/fs';
import { overlayFs } from '../workspace/overlay';
import type { FileRole, PairRole } from '../workspace/pairing';
import { isInside, relativePosix } from '../workspace/selection';
import { WorkspaceSession } from '../workspace/session';
import type { ResolvedProject } from '../workspace/types';
import type { OtherFile } from './convert';
import type { OpenDocuments } from './documents';
import type { EditorSettings } from './settings';

/** Files indexed per workspace folder at start-up; beyond this, pairing reads files on demand. */
const MAX_INDEXED_FILES = 20_000;
const INDEX_BATCH = 64;
/** Partner files whose readings are kept between analyses. */
const PARTNER_CACHE_ENTRIES = 64;

export interface WorkspaceFolderPath {
  uri: string;
  path: string | null;
}

export interface PairingFound {
  partners: PartnerDocument[];
  role?: PairRole;
  paths: string[];
}

export interface ScanHooks {
  report(done: number, total: number): void;
  warn(message: string): void;
  /** True when the server is shutting down: the scan stops. */
  stopped(): boolean;
}

export class WorkspaceIndex {
  folders: WorkspaceFolderPath[] = [];
  readonly session: WorkspaceSession;
  /** Display path (in messages) -> absolute path, for related locations in other files. */
  private readonly displayed = new Map<string, string>();

  constructor(private readonly docs: OpenDocuments) {
    this.session = new WorkspaceSession({
      fs: overlayFs(docs),
      showPath: (abs) => this.displayPath(abs),
      knownRole: (path) => this.openRole(path),
      readingEntries: PARTNER_CACHE_ENTRIES,
    });
  }

  folderOf(path: string): string | null {
    let best: string | null = null;
    for (const f of this.folders) {
      if (!f.path || !isInside(f.path, path)) continue;
      if (!best || f.path.length > best.length) best = f.path;
    }
    return best;
  }

  /** The project's include / exclude, then the editor's (the project file's include takes precedence). */
  selected(path: string | null, project: ResolvedProject, settings: EditorSettings): boolean {
    const base = path ? this.folderOf(path) : null;
    return this.session.selects(path, project, { base, include: settings.files.include, exclude: settings.files.exclude });
  }

  /** An open document's role: from its current analysis, else read from its open text. */
  private openRole(path: string): FileRole | undefined {
    const od = this.docs.atPath(path);
    if (!od) return undefined;
    if (od.cache?.role && od.cache.version === od.doc.version) return od.cache.role;
    // The version being analysed read its own role first (server.ts compute).
    if (od.ownRole && od.ownRole.version === od.doc.version) return od.ownRole.role;
    return this.session.readRole(path);
  }

  pairingFor(path: string, project: ResolvedProject, onError: (err: unknown) => void): PairingFound {
    try {
      const found = this.session.partnersOf(path, project);
      return { partners: found.partners, role: found.pairRole, paths: found.paths };
    } catch (err) {
      onError(err);
      return { partners: [], paths: [] };
    }
  }

  /** Records the role of every config file under the folders; null when stopped. */
  async scan(folders: WorkspaceFolderPath[], hooks: ScanHooks): Promise<number | null> {
    const files: string[] = [];
    for (const f of folders) {
      if (!f.path) continue;
      const found = discoverFiles([f.path], f.path, undefined, { fs: this.session.fs, maxFiles: MAX_INDEXED_FILES });
      files.push(...found.files);
      for (const e of [...found.errors, ...found.warnings]) hooks.warn(e);
    }
    for (let i = 0; i < files.length; i++) {
      if (hooks.stopped()) return null;
      const file = files[i]!;
      if (!this.docs.isOpen(file)) this.session.indexFile(file);
      if (i % INDEX_BATCH === INDEX_BATCH - 1) {
        hooks.report(i + 1, files.length);
        await new Promise((resolve) => setImmediate(resolve));
      }
    }
    return files.length;
  }

  /** How messages name another file: relative to its workspace folder (remembered for links back). */
  displayPath(abs: string): string {
    const folder = this.folderOf(abs);
    const shown = folder ? relativePosix(folder, abs) : abs;
    this.displayed.set(shown, abs);
    return shown;
  }

  otherFile(shown: string): OtherFile | null {
    const path = this.displayed.get(shown) ?? (isAbsolute(shown) ? shown : null);
    if (!path) return null;
    const od = this.docs.atPath(path);
    if (od) return { uri: od.uri, mapper: od.doc };
    const read = readTextFile(this.session.fs, path);
    if (!read.ok) return null;
    let fileUri: string;
    try {
      fileUri = pathToFileURL(path).href;
    } catch {
      return null;
    }
    return { uri: fileUri, mapper: new LineIndex(read.text) };
  }
}
