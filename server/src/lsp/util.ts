/** Small helpers of the protocol layer: URIs, document formats, request parameter checks. */
import { fileURLToPath } from 'node:url';
import { ErrorCodes, ResponseError, type CancellationToken } from 'vscode-languageserver/node';
import type { Finding, Severity } from '../base/findings';
import type { FileResult } from '../engine/api';
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
  return (err instanceof Error ? err.message : String(err)).split('\n')[0]!;
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

type ErrorLog = (name: string, err: unknown) => void;

/** Wraps request handlers: an exception becomes a ResponseError for that request only. */
export function requestGuard(log: ErrorLog) {
  return <P, R>(name: string, handler: (params: P, token: CancellationToken) => R | Promise<R>) =>
    async (params: P, token: CancellationToken): Promise<R> => {
      try {
        return await handler(params, token);
      } catch (err) {
        if (err instanceof ResponseError) throw err;
        log(name, err);
        throw new ResponseError(ErrorCodes.InternalError, `noiselint: ${name} failed: ${errorMessage(err)}`);
      }
    };
}

/** Wraps notification handlers: an exception (or a rejected promise) is logged, never fatal. */
export function notificationGuard(log: ErrorLog) {
  return (name: string, handler: () => unknown): void => {
    try {
      const result = handler();
      if (result instanceof Promise) result.catch((err: unknown) => log(name, err));
    } catch (err) {
      log(name, err);
    }
  };
}

/** A finding about the whole file (shown at its start). */
export function fileFinding(rule: string, severity: Severity, message: string): Finding {
  return { rule, severity, message, span: { start: 0, end: 0 }, documentIndex: 0, related: [], fixes: [] };
}

/** The engine's findings (rules and parse errors), plus a project-file problem on config files. */
export function visibleFindings(file: FileResult, projectProblem: string | null): Finding[] {
  if (!projectProblem || !file.isDiffusionConfig) return file.findings;
  return [fileFinding('project-file', 'warning', `${projectProblem}; checking with the built-in defaults`), ...file.findings];
}
