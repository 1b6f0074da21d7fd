/**
 * The open documents of the language server: each document's text and last analysis, and the
 * indexes by path and by folder that the overlay file system and pairing read.
 */
import { dirname } from 'node:path';
import type { Diagnostic } from 'vscode-languageserver/node';
import type { TextDocument } from 'vscode-languageserver-textdocument';
import type { Finding } from '../base/findings';
import type { AnalyzeOptions } from '../engine/api';
import type { SourceFormat } from '../parse/types';
import type { FileRole } from '../workspace/pairing';
import type { OpenTexts } from '../workspace/overlay';
import { baseName } from '../workspace/selection';

/** How an analysis read its text: enough to read it again the same way (partners only change findings). */
export type ReadOptions = Omit<AnalyzeOptions, 'partners' | 'pairRole'>;

/** One analysis of an open document, tied to the version and settings generation it used. */
export interface Analyzed {
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

export interface OpenDocument {
  uri: string;
  /** File-system path for file: URIs. */
  path: string | null;
  format: SourceFormat;
  doc: TextDocument;
  /** The pending check: a timer, or an immediate when the debounce is 0. */
  timer: NodeJS.Timeout | NodeJS.Immediate | undefined;
  debounceMs: number;
  /**
   * The role read from this version's own text at the start of its analysis, so that pairing
   * takes it from there instead of reading the document once more.
   */
  ownRole?: { version: number; role: FileRole };
  lastPublishedVersion: number;
  cache: Analyzed | undefined;
  /** The document was a diffusion config at some point: parse problems keep showing while it is broken. */
  wasConfig: boolean;
}

/** Open documents by URI, with indexes by path and by folder (the overlay's view of them). */
export class OpenDocuments implements OpenTexts {
  private readonly byUri = new Map<string, OpenDocument>();
  private readonly byPath = new Map<string, string>();
  private readonly byFolder = new Map<string, Set<string>>();

  get(uri: string): OpenDocument | undefined {
    return this.byUri.get(uri);
  }

  atPath(path: string): OpenDocument | undefined {
    const uri = this.byPath.get(path);
    return uri ? this.byUri.get(uri) : undefined;
  }

  isOpen(path: string): boolean {
    return this.byPath.has(path);
  }

  values(): IterableIterator<OpenDocument> {
    return this.byUri.values();
  }

  add(od: OpenDocument): void {
    this.byUri.set(od.uri, od);
    if (od.path) this.track(od.path, od.uri);
  }

  remove(od: OpenDocument): void {
    this.byUri.delete(od.uri);
    if (od.path) this.untrack(od.path);
  }

  textOf(path: string): string | undefined {
    return this.atPath(path)?.doc.getText();
  }

  namesIn(folder: string): Iterable<string> | undefined {
    return this.byFolder.get(folder);
  }

  private track(path: string, uri: string): void {
    this.byPath.set(path, uri);
    const folder = dirname(path);
    let names = this.byFolder.get(folder);
    if (!names) {
      names = new Set();
      this.byFolder.set(folder, names);
    }
    names.add(baseName(path));
  }

  private untrack(path: string): void {
    this.byPath.delete(path);
    const folder = dirname(path);
    const names = this.byFolder.get(folder);
    names?.delete(baseName(path));
    if (names?.size === 0) this.byFolder.delete(folder);
  }
}

/** Cancels a pending check (a timer or an immediate). */
export function cancelPending(t: NodeJS.Timeout | NodeJS.Immediate | undefined): void {
  if (!t) return;
  if (t.constructor?.name === 'Immediate') clearImmediate(t as NodeJS.Immediate);
  else clearTimeout(t as NodeJS.Timeout);
}
