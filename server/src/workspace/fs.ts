/**
 * The file-system view the workspace code reads through. The CLI uses the real disk; the language
 * server passes its own view so that open, unsaved documents win over the disk copy.
 */
import { closeSync, constants as fsConstants, fstatSync, openSync, readSync, readdirSync, realpathSync, statSync } from 'node:fs';
import { basename, dirname, join } from 'node:path';
import { DEFAULT_PARSE_LIMITS } from '../parse/types';

export type EntryKind = 'file' | 'dir' | 'other';

export interface DirEntry {
  name: string;
  /** Kind of the entry itself (a symlink is followed to find it). */
  kind: EntryKind;
  isSymlink: boolean;
}

export interface WorkspaceFs {
  /** Kind and size of a path (symlinks followed), or undefined when it does not exist. */
  stat(path: string): { kind: EntryKind; size: number } | undefined;
  /** Entries of a folder. Throws (with a Node error code) when the folder cannot be read. */
  readDir(path: string): DirEntry[];
  /**
   * Raw bytes of a file; past `maxBytes` the read stops (more than `maxBytes` bytes back tells the
   * caller it is too large). Throws (with a Node error code) when it cannot be read.
   */
  readBytes(path: string, maxBytes?: number): Uint8Array;
  /** Canonical path with symlinks resolved, or undefined when the path does not exist. */
  realpath(path: string): string | undefined;
}

function kindOf(st: { isFile(): boolean; isDirectory(): boolean }): EntryKind {
  if (st.isFile()) return 'file';
  if (st.isDirectory()) return 'dir';
  return 'other';
}

export const nodeFs: WorkspaceFs = {
  stat(path) {
    try {
      const st = statSync(path);
      return { kind: kindOf(st), size: st.size };
    } catch {
      return undefined;
    }
  },
  readDir(path) {
    const out: DirEntry[] = [];
    for (const d of readdirSync(path, { withFileTypes: true })) {
      if (d.isSymbolicLink()) {
        let kind: EntryKind = 'other';
        try {
          kind = kindOf(statSync(`${path}/${d.name}`));
        } catch {
          // A dangling link: neither file nor folder.
        }
        out.push({ name: d.name, kind, isSymlink: true });
      } else {
        out.push({ name: d.name, kind: kindOf(d), isSymlink: false });
      }
    }
    return out;
  },
  readBytes(path, maxBytes = Number.MAX_SAFE_INTEGER) {
    return readBounded(path, maxBytes);
  },
  realpath(path) {
    try {
      return realpathSync(path);
    } catch {
      return undefined;
    }
  },
};

/** Thrown by readBounded for anything but a regular file (after the link is resolved). */
export class NotRegularFileError extends Error {
  readonly code = 'ENOTREG';
}

/**
 * Reads until past `maxBytes` at most (64 KiB more), whatever `stat` says: files such as /proc/self/pagemap
 * report size 0 and never end. Opened without blocking (a FIFO swapped in after a stat would
 * block an ordinary open), then only a regular file is read.
 */
const READ_SCRATCH = Buffer.allocUnsafe(64 * 1024);

export function readBounded(path: string, maxBytes: number): Buffer {
  const fd = openSync(path, fsConstants.O_RDONLY | fsConstants.O_NONBLOCK);
  try {
    if (!fstatSync(fd).isFile()) throw new NotRegularFileError('not a regular file');
    // Whole 64 KiB reads (some special files refuse odd sizes), stopping once past the limit.
    // Into one shared scratch buffer, copied out at the size read: a fresh 64 KiB per read made
    // every small config cost two 64 KiB allocations (the second read only finds the end).
    const chunks: Buffer[] = [];
    let total = 0;
    while (total <= maxBytes) {
      const n = readSync(fd, READ_SCRATCH, 0, READ_SCRATCH.length, null);
      if (n <= 0) break;
      chunks.push(Buffer.from(READ_SCRATCH.subarray(0, n)));
      total += n;
    }
    return chunks.length === 1 ? chunks[0]! : Buffer.concat(chunks, total);
  } finally {
    closeSync(fd);
  }
}

/** How a file's text is stored on disk; a fix writes it back the same way. */
export type TextEncoding = 'utf-8' | 'utf-16le' | 'utf-16be';

/**
 * `base` with one more file: `path` holding `bytes` (standard input read as that path). The file
 * shows in its folder's listing, so discovery and pairing see it as they would see it on disk.
 */
export function withExtraFile(base: WorkspaceFs, path: string, bytes: Uint8Array): WorkspaceFs {
  const folder = dirname(path);
  const name = basename(path);
  return {
    stat: (p) => (p === path ? { kind: 'file', size: bytes.length } : base.stat(p)),
    readDir: (p) => {
      const entries = base.readDir(p);
      return p === folder ? [...entries.filter((e) => e.name !== name), { name, kind: 'file', isSymlink: false }] : entries;
    },
    readBytes: (p, maxBytes) => (p === path ? bytes : base.readBytes(p, maxBytes)),
    realpath: (p) => {
      if (p !== path) return base.realpath(p);
      const realFolder = base.realpath(folder);
      return realFolder ? join(realFolder, name) : path;
    },
  };
}

export type TextReadResult =
  /** `encoding` is absent for UTF-8. */
  | { ok: true; text: string; encoding?: TextEncoding }
  /**
   * 'io': the file could not be read (missing, permission); callers treat it as an error.
   * 'skipped': the file was read but is not text we analyse (binary, not UTF-8, too large).
   */
  | { ok: false; kind: 'io' | 'skipped'; problem: string; tooLarge?: true };

const UTF8 = new TextDecoder('utf-8', { fatal: true, ignoreBOM: true });

/**
 * Reads a config file as text, bounded by `maxBytes`. Never throws. A BOM is kept in the text
 * (offsets count it, and a fix must write it back).
 */
export function readTextFile(fs: WorkspaceFs, path: string, maxBytes: number = DEFAULT_PARSE_LIMITS.maxFileBytes): TextReadResult {
  const st = fs.stat(path);
  if (!st) return { ok: false, kind: 'io', problem: 'cannot read: no such file' };
  if (st.kind === 'dir') return { ok: false, kind: 'io', problem: 'is a folder, not a file' };
  // A FIFO would block the read forever and a device (/dev/zero) would never end it.
  if (st.kind !== 'file') return { ok: false, kind: 'io', problem: 'not a regular file (a pipe, socket or device)' };
  if (st.size > maxBytes) {
    return {
      ok: false,
      kind: 'skipped',
      problem: `skipped: ${formatBytes(st.size)} is above the ${formatBytes(maxBytes)} limit (limits.maxFileBytes)`,
      tooLarge: true,
    };
  }
  let bytes: Uint8Array;
  try {
    bytes = fs.readBytes(path, maxBytes);
  } catch (err) {
    if (err instanceof NotRegularFileError) return { ok: false, kind: 'io', problem: 'not a regular file (a pipe, socket or device)' };
    return { ok: false, kind: 'io', problem: `cannot read: ${describeFsError(err)}` };
  }
  // The size can change between stat and read, and some files report 0: keep the bound.
  if (bytes.length > maxBytes) {
    return { ok: false, kind: 'skipped', problem: `skipped: above the ${formatBytes(maxBytes)} limit (limits.maxFileBytes)`, tooLarge: true };
  }
  return decodeText(bytes);
}

const UTF16 = {
  'utf-16le': new TextDecoder('utf-16le', { fatal: true, ignoreBOM: true }),
  'utf-16be': new TextDecoder('utf-16be', { fatal: true, ignoreBOM: true }),
} as const;

/**
 * Bytes to text: UTF-8 (with or without a BOM), or UTF-16 when a byte-order mark says so. The BOM
 * stays in the text (U+FEFF), so offsets count it and a fix writes it back. Text with NUL
 * characters is treated as binary.
 */
export function decodeText(bytes: Uint8Array): TextReadResult {
  const encoding: TextEncoding | null =
    bytes.length >= 2 && bytes[0] === 0xff && bytes[1] === 0xfe
      ? 'utf-16le'
      : bytes.length >= 2 && bytes[0] === 0xfe && bytes[1] === 0xff
        ? 'utf-16be'
        : null;
  if (encoding) {
    let text: string;
    try {
      text = UTF16[encoding].decode(bytes);
    } catch {
      return { ok: false, kind: 'skipped', problem: `skipped: not valid ${encoding.toUpperCase()} (it starts with a UTF-16 byte-order mark)` };
    }
    if (text.includes('\u0000')) return { ok: false, kind: 'skipped', problem: 'skipped: looks binary (contains NUL characters)' };
    return { ok: true, text, encoding };
  }
  if (bytes.includes(0)) {
    return { ok: false, kind: 'skipped', problem: 'skipped: looks binary (contains NUL bytes)' };
  }
  try {
    return { ok: true, text: UTF8.decode(bytes) };
  } catch {
    return { ok: false, kind: 'skipped', problem: 'skipped: not valid UTF-8' };
  }
}

/** Text to the bytes of `encoding` (the inverse of decodeText; a BOM in the text is written as is). */
export function encodeText(text: string, encoding: TextEncoding = 'utf-8'): Buffer {
  if (encoding === 'utf-8') return Buffer.from(text, 'utf8');
  const bytes = Buffer.from(text, 'utf16le');
  return encoding === 'utf-16be' ? bytes.swap16() : bytes;
}

export function describeFsError(err: unknown): string {
  const code = (err as NodeJS.ErrnoException | undefined)?.code;
  switch (code) {
    case 'ENOENT':
      return 'no such file';
    case 'EACCES':
    case 'EPERM':
      return 'permission denied';
    case 'EISDIR':
      return 'is a folder';
    case 'ENOTDIR':
      return 'not a folder';
    case 'ELOOP':
      return 'too many symbolic links';
    default:
      return code ?? (err instanceof Error ? err.message.split('\n')[0]! : String(err));
  }
}

function formatBytes(n: number): string {
  if (n >= 1024 * 1024) return `${(n / (1024 * 1024)).toFixed(1)} MB`;
  if (n >= 1024) return `${(n / 1024).toFixed(1)} KB`;
  return `${n} bytes`;
}
