/** Reads a config file for the CLI: bounded, and every failure is one line, never an exception. */
import { readFileSync, statSync } from 'node:fs';
import { DEFAULT_PARSE_LIMITS } from '../parse/types';

export type ReadResult = { ok: true; text: string } | { ok: false; problem: string };

const UTF8 = new TextDecoder('utf-8', { fatal: true, ignoreBOM: true }) // keep a BOM: fixes must write it back;

export function readConfigFile(path: string, maxBytes = DEFAULT_PARSE_LIMITS.maxFileBytes): ReadResult {
  let size: number;
  try {
    const st = statSync(path);
    if (st.isDirectory()) return { ok: false, problem: `${path} is a folder, not a file` };
    size = st.size;
  } catch (err) {
    return { ok: false, problem: `cannot read ${path}: ${describeFsError(err)}` };
  }
  if (size > maxBytes) {
    return { ok: false, problem: `${path} is ${formatBytes(size)}, above the ${formatBytes(maxBytes)} limit (limits.maxFileBytes)` };
  }
  let bytes: Buffer;
  try {
    bytes = readFileSync(path);
  } catch (err) {
    return { ok: false, problem: `cannot read ${path}: ${describeFsError(err)}` };
  }
  if (bytes.includes(0)) return { ok: false, problem: `${path} looks binary (it contains NUL bytes); skipped` };
  try {
    return { ok: true, text: UTF8.decode(bytes) };
  } catch {
    return { ok: false, problem: `${path} is not valid UTF-8; skipped` };
  }
}

function describeFsError(err: unknown): string {
  const code = (err as NodeJS.ErrnoException)?.code;
  switch (code) {
    case 'ENOENT':
      return 'no such file';
    case 'EACCES':
    case 'EPERM':
      return 'permission denied';
    case 'EISDIR':
      return 'it is a folder';
    default:
      return code ?? (err instanceof Error ? err.message : String(err));
  }
}

function formatBytes(n: number): string {
  if (n >= 1024 * 1024) return `${(n / (1024 * 1024)).toFixed(1)} MB`;
  if (n >= 1024) return `${(n / 1024).toFixed(1)} KB`;
  return `${n} bytes`;
}
