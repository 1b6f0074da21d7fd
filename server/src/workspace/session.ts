/**
 * One workspace session, shared by the check command and the language server: which project
 * governs a file, which files are selected, each config file's role, and the documents of its
 * training or sampling partners. The file system is passed in: the CLI passes the disk, the
 * server an overlay in which open documents replace their disk copies (overlay.ts).
 *
 * Two modes:
 * - `stableTree: true` (a check run): nothing changes during the session, so readings, roles and
 *   the file-system facts of pairing are kept for the whole run (bounded by an LRU).
 * - `stableTree: false` (an editor): files change; a reading is reused only while its text is the
 *   same, and `fileChanged` / `projectsChanged` drop what an edit makes stale.
 */
import { dirname } from 'node:path';
import { LruCache } from '@noiselint/shared-math';
import { analyzeRead, analyzeText, readFile, type AnalyzeOptions, type FileReading, type FileResult } from '../engine/api';
import { mayBeDiffusionConfig, passedOverReading } from '../engine/prefilter';
import type { PartnerDocument } from '../rules/types';
import { projectSelects } from './discover';
import { nodeFs, readTextFile, type TextReadResult, type WorkspaceFs } from './fs';
import { findPartners, MAX_AUTO_CANDIDATES, PairingMemo, roleOfSetups, type FileRole, type PairRole } from './pairing';
import { clearProjectCache, DEFAULT_PROJECT, loadProject } from './projectFile';
import type { ResolvedProject } from './types';
import { globMatcher, relativePosix } from './selection';
import { withProps } from '../base/objects';
import { DEFAULT_PARSE_LIMITS } from '../parse/types';

/** A file read and analysed without rules (a role probe or a partner). */
interface Reading {
  text: string;
  project: ResolvedProject;
  file: FileReading;
  /** The pre-filter passed the text over (engine/prefilter.ts): nothing was parsed. */
  passedOver: boolean;
}

export interface SessionOptions {
  fs?: WorkspaceFs;
  /** Files do not change during the session (a check run). */
  stableTree?: boolean;
  /**
   * How messages name a partner file (check: relative to the current folder; the server: relative
   * to its workspace folder). Related locations resolve it back.
   */
  showPath?: (absPath: string) => string;
  /** Projects the caller already loaded, by file (saves a lookup per probe). */
  projects?: ReadonlyMap<string, ResolvedProject>;
  /**
   * A role the caller knows better than the file system (the server: an open document's role from
   * its own last analysis). Undefined means "read it".
   */
  knownRole?: (absPath: string) => FileRole | undefined;
  /** Readings kept (role probes and partners). */
  readingEntries?: number;
}

export interface Pairing {
  pairRole?: PairRole;
  partners: PartnerDocument[];
  /** Absolute paths of the partner files read. */
  paths: string[];
  /** Their texts, by absolute path (related locations in other files). */
  texts: Map<string, string>;
}

export interface ProjectLookup {
  project: ResolvedProject;
  /** Why the project file could not be used (its defaults apply instead); null when it could. */
  problem: string | null;
}

/** Editor-side file selection on top of the project's own include / exclude. */
export interface ExtraSelection {
  /** Folder the globs are relative to (the workspace folder); the project root when absent. */
  base?: string | null;
  include: readonly string[];
  exclude: readonly string[];
}

/**
 * Readings kept by a check run. Automatic pairing looks within one folder (at most
 * MAX_AUTO_CANDIDATES files) and files are checked folder by folder, so twice that keeps every
 * probe until its own check and its partners' checks, and memory stays flat on large trees.
 */
export const DEFAULT_READING_ENTRIES = 2 * MAX_AUTO_CANDIDATES;

/**
 * Automatic pairing reads a sibling's role only up to this size: a diffusion config is a few
 * kilobytes (an explicit beta list of 1,000 values about 20 KB), so a larger sibling is not
 * parsed to learn its role and is not auto-paired (explicit pairs in the project file still work).
 */
export const ROLE_PROBE_MAX_BYTES = 256 * 1024;

/** Readings kept between the role probe and the file's own check, by text length. */
export const KEPT_READING_MAX_CHARS = 64 * 1024;

function errorMessage(err: unknown): string {
  return (err instanceof Error ? err.message : String(err)).split('\n')[0] ?? '';
}

export class WorkspaceSession {
  readonly fs: WorkspaceFs;
  private readonly stable: boolean;
  private readonly showPath: (absPath: string) => string;
  private readonly projects: ReadonlyMap<string, ResolvedProject>;
  private readonly knownRole: (absPath: string) => FileRole | undefined;
  private readonly readings: LruCache<string, Reading | null>;
  private readonly roles = new Map<string, FileRole>();
  private pairingMemo: PairingMemo | undefined;
  /** The folder a folder-by-folder check is in (enterFolder). */
  private folder: string | null = null;
  private readonly warned = new Set<string>();
  private readonly pairsChecked = new Set<ResolvedProject>();
  /** Pairing and project warnings, each once, in the order they were met. */
  readonly warnings: string[] = [];

  constructor(options: SessionOptions = {}) {
    this.fs = options.fs ?? nodeFs;
    this.stable = options.stableTree ?? false;
    this.showPath = options.showPath ?? ((p) => p);
    this.projects = options.projects ?? new Map();
    this.knownRole = options.knownRole ?? (() => undefined);
    const entries = options.readingEntries ?? DEFAULT_READING_ENTRIES;
    this.readings = new LruCache(entries, entries);
    if (this.stable) this.pairingMemo = new PairingMemo(this.fs);
  }

  // ------------------------------------------------------------------ projects and selection

  /** The project of a file; an invalid project file falls back to the defaults, with the reason. */
  projectFor(path: string | null): ProjectLookup {
    if (!path) return { project: { ...DEFAULT_PROJECT, rules: {}, aliases: {}, limits: {} }, problem: null };
    const known = this.projects.get(path);
    if (known) return { project: known, problem: null };
    try {
      return { project: loadProject(path, this.fs), problem: null };
    } catch (err) {
      return { project: { ...DEFAULT_PROJECT, root: dirname(path), rules: {}, aliases: {}, limits: {} }, problem: errorMessage(err) };
    }
  }

  /**
   * Whether a file is checked: the project file's include / exclude first, then the extra
   * (editor) globs. The project's include, when it has one, takes precedence over the extra one.
   */
  selects(path: string | null, project: ResolvedProject, extra?: ExtraSelection): boolean {
    if (!path) return true;
    if (project.file && !projectSelects(project, path)) return false;
    if (!extra) return true;
    const rel = relativePosix(extra.base ?? project.root, path);
    if (extra.exclude.length && globMatcher(extra.exclude)(rel)) return false;
    const projectIncludes = !!project.file && project.include.length > 0;
    if (!projectIncludes && extra.include.length && !globMatcher(extra.include)(rel)) return false;
    return true;
  }

  // ------------------------------------------------------------------ readings and roles

  /** A file read and analysed without rules, memoised; null when unreadable. */
  private reading(path: string, purpose: 'role' | 'partner' = 'partner'): Reading | null {
    const cached = this.readings.get(path);
    if (cached !== undefined && (this.stable || cached === null)) return cached;
    let entry: Reading | null = null;
    try {
      const { project } = this.projectFor(path);
      // A role probe of a large sibling is not worth its parse: such a file is not auto-paired,
      // and it is not remembered, so its own check reads it in full. (Bounded by the read itself:
      // a stat of its own cost as much as the rest of the read.)
      const max = project.limits.maxFileBytes ?? DEFAULT_PARSE_LIMITS.maxFileBytes;
      const bound = purpose === 'role' ? Math.min(ROLE_PROBE_MAX_BYTES, max) : max;
      const read = readTextFile(this.fs, path, bound);
      if (!read.ok && read.tooLarge && bound < max) return null;
      if (read.ok) {
        if (cached && cached.text === read.text && cached.project === project) entry = cached;
        else {
          // Not parsed when the text cannot hold a diffusion config (engine/prefilter.ts).
          const passedOver = !mayBeDiffusionConfig(read.text, project.aliases);
          entry = {
            text: read.text,
            project,
            file: passedOver ? passedOverReading(path, read.text) : readFile(read.text, { path, project }),
            passedOver,
          };
        }
      }
    } catch {
      entry = null;
    }
    // Only small readings are kept: a large file's tree is not held for the rest of the run (its
    // own check parses it again).
    if (entry === null || entry.text.length <= KEPT_READING_MAX_CHARS) this.readings.set(path, entry);
    else this.readings.delete(path);
    return entry;
  }

  /**
   * A check that goes folder by folder says where it is: readings of other folders are let go
   * (automatic partners are in the same folder, and roles are remembered apart from readings; a
   * partner elsewhere is read again when needed), so the trees of a finished folder do not
   * outlive it and garbage collection does not keep copying them.
   */
  enterFolder(folder: string): void {
    if (folder === this.folder) return;
    this.folder = folder;
    for (const path of this.readings.keys()) if (dirname(path) !== folder) this.readings.delete(path);
  }

  /** The role of a config file: what the caller knows, else from its content (memoised). */
  roleOf = (path: string): FileRole => {
    const known = this.knownRole(path);
    if (known !== undefined) return known;
    let role = this.roles.get(path);
    if (role === undefined) {
      const read = this.reading(path, 'role');
      role = read ? roleOfSetups(read.file.documents.map((d) => d.setup)) : 'none';
      this.roles.set(path, role);
    }
    return role;
  };

  /** The role read from a file's current content, not remembered (an open document being edited). */
  readRole(path: string): FileRole {
    const read = this.reading(path);
    return read ? roleOfSetups(read.file.documents.map((d) => d.setup)) : 'none';
  }

  /** Records a role learnt elsewhere (the server: an open document's analysis). */
  noteRole(path: string, role: FileRole): FileRole | undefined {
    const before = this.roles.get(path);
    this.roles.set(path, role);
    return before;
  }

  /** Reads a file's role now (the server's start-up index), replacing what was known. */
  indexFile(path: string): FileRole {
    this.roles.delete(path);
    this.readings.delete(path);
    return this.roleOf(path);
  }

  /** A file changed, appeared or went away: forget what was read of it. */
  fileChanged(path: string): void {
    this.readings.delete(path);
    this.roles.delete(path);
    if (this.stable) this.pairingMemo = new PairingMemo(this.fs);
  }

  /** A project file changed: every project, pairing fact and reading may be stale. */
  projectsChanged(): void {
    clearProjectCache(this.fs);
    this.readings.clear();
    this.roles.clear();
    this.pairsChecked.clear();
    if (this.stable) this.pairingMemo = new PairingMemo(this.fs);
  }

  // ------------------------------------------------------------------ pairing

  private warnOnce(message: string): void {
    if (this.warned.has(message)) return;
    this.warned.add(message);
    this.warnings.push(message);
  }

  /** Pairing for one file: its role and the diffusion documents of its partner file(s). */
  partnersOf(path: string, project: ResolvedProject): Pairing {
    const none: Pairing = { partners: [], paths: [], texts: new Map() };
    const memo = this.pairingMemo;
    if (memo && !this.pairsChecked.has(project)) {
      this.pairsChecked.add(project);
      for (const w of memo.pairs(project).warnings) this.warnOnce(w);
    }
    const match = memo
      ? findPartners(path, project, { roleOf: this.roleOf, memo })
      : findPartners(path, project, { fs: this.fs, roleOf: this.roleOf });
    if (!match) return none;
    const partners: PartnerDocument[] = [];
    const texts = new Map<string, string>();
    for (const partner of match.partners) {
      const read = this.reading(partner);
      if (!read) {
        this.warnOnce(`${partner}: paired file could not be read; pair ignored`);
        continue;
      }
      texts.set(partner, read.text);
      const shown = this.showPath(partner);
      for (const doc of read.file.documents) {
        if (doc.setup.isDiffusionConfig) partners.push({ path: shown, setup: doc.setup, analysis: doc.analysis });
      }
    }
    return partners.length ? { pairRole: match.role, partners, paths: match.partners, texts } : withProps(none, { paths: match.partners });
  }

  // ------------------------------------------------------------------ checking a file

  /**
   * The text of a file as the session reads it; the reading is kept for pairing and for the file's
   * own analysis, so each file is read and parsed once per run.
   */
  readText(path: string, project: ResolvedProject): TextReadResult {
    // A large file's reading would not be kept: its own check is then its only parse.
    if (this.readings.get(path) === undefined && (this.fs.stat(path)?.size ?? 0) > KEPT_READING_MAX_CHARS) {
      return readTextFile(this.fs, path, project.limits.maxFileBytes);
    }
    const read = this.reading(path);
    if (read && read.project === project) return { ok: true, text: read.text };
    // Unreadable (the reason is read again) or governed by another project than the probe's.
    return readTextFile(this.fs, path, project.limits.maxFileBytes);
  }

  /** Whether the pre-filter lets `text` through (engine/prefilter.ts), from the kept reading when it is the same text. */
  mayBeConfig(path: string, text: string, project: ResolvedProject): boolean {
    const read = this.readings.get(path);
    if (read && read.text === text && read.project === project) return !read.passedOver;
    return mayBeDiffusionConfig(text, project.aliases);
  }

  /**
   * The whole analysis of `path`, whose text is `text`. When the session already read the same
   * text under the same project (a role probe), the rules run on that reading: nothing is parsed
   * twice.
   */
  analyze(path: string, text: string, options: Omit<AnalyzeOptions, 'path'> & { project: ResolvedProject }): FileResult {
    const full: AnalyzeOptions = withProps(options, { path });
    const read = this.readings.get(path);
    const reusable = read && read.text === text && read.project === options.project && !options.format && !options.limits;
    return reusable ? analyzeRead(read.file, full) : analyzeText(text, full);
  }
}
