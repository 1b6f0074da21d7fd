/**
 * A file-system view in which open editor documents replace their disk copies: reads return the
 * open text, folder listings include open documents not yet saved. Everything else is the base view.
 */
import { nodeFs, type DirEntry, type WorkspaceFs } from './fs';

export interface OpenTexts {
  /** The open text of an absolute path, or undefined when it is not open. */
  textOf(path: string): string | undefined;
  /** File names of open documents in a folder. */
  namesIn(folder: string): Iterable<string> | undefined;
}

export function overlayFs(open: OpenTexts, base: WorkspaceFs = nodeFs): WorkspaceFs {
  return {
    stat: (path) => {
      const text = open.textOf(path);
      if (text !== undefined) return { kind: 'file', size: Buffer.byteLength(text, 'utf8') };
      return base.stat(path);
    },
    readDir: (path) => {
      let entries: DirEntry[] = [];
      let failure: unknown = null;
      try {
        entries = base.readDir(path);
      } catch (err) {
        failure = err;
      }
      const names = open.namesIn(path);
      let added = false;
      if (names) {
        const present = new Set(entries.map((e) => e.name));
        for (const name of names) {
          if (!present.has(name)) {
            entries.push({ name, kind: 'file', isSymlink: false });
            added = true;
          }
        }
      }
      // eslint-disable-next-line @typescript-eslint/only-throw-error -- rethrows what readDir threw
      if (failure && !added) throw failure;
      return entries;
    },
    readBytes: (path, maxBytes) => {
      const text = open.textOf(path);
      return text !== undefined ? Buffer.from(text, 'utf8') : base.readBytes(path, maxBytes);
    },
    realpath: (path) => base.realpath(path) ?? (open.textOf(path) !== undefined ? path : undefined),
  };
}
