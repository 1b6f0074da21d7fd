/** Small helpers of the protocol layer: URIs, document formats, request parameter checks. */
import { fileURLToPath } from 'node:url';
import { ErrorCodes, ResponseError } from 'vscode-languageserver/node';
import type { SourceFormat } from '../parse/types';
import { getRuleMeta } from '../rules';

export function uriToPath(uri: string): string | null {
  if (!uri.startsWith('file:')) return null;
  try {
    return fileURLToPath(uri);
  } catch {
    return null;
  }
}

export function formatOf(languageId: string | undefined, uri: string): SourceFormat {
  if (languageId === 'json' || languageId === 'jsonc' || languageId === 'yaml' || languageId === 'toml') return languageId;
  const lower = uri.toLowerCase();
  if (lower.endsWith('.toml')) return 'toml';
  if (lower.endsWith('.jsonc')) return 'jsonc';
  if (lower.endsWith('.json')) return 'json';
  return 'yaml';
}

export function errorMessage(err: unknown): string {
  return (err instanceof Error ? err.message : String(err)).split('\n')[0];
}

export function requireUri(params: unknown, nested: boolean): string {
  const p = params as { textDocument?: { uri?: unknown }; uri?: unknown } | null | undefined;
  const uri = nested ? p?.textDocument?.uri : p?.uri;
  if (typeof uri !== 'string' || uri.length === 0) {
    throw new ResponseError(ErrorCodes.InvalidParams, nested ? 'params.textDocument.uri must be a string' : 'params.uri must be a string');
  }
  return uri;
}

export function isPosition(p: unknown): p is { line: number; character: number } {
  const q = p as { line?: unknown; character?: unknown } | null | undefined;
  return typeof q?.line === 'number' && typeof q?.character === 'number';
}

/** Rule ids (and `parse-error`) have a documentation page; internal codes do not. */
export function isRuleId(code: string): boolean {
  return getRuleMeta(code) !== undefined;
}
