/** Entry point of the parse layer: text -> ParsedFile. Never throws. */
import { LineIndex } from './lineIndex';
import { readJson } from './json';
import { firstLine, resolveLimits, utf8LengthExceeds, type SourceComment } from './shared';
import { readSuppressions } from './suppressions';
import { detectLineEnding, hasBom } from './textInfo';
import type { ParsedDocument, ParsedFile, ParseLimits, ParseProblem, SourceFormat } from './types';
import { readToml } from './toml';
import { readYaml } from './yaml';
import { readYamlFast } from './fastYaml';
import { readJsonFast } from './fastJson';
import { coreScalar, type ScalarInterpreter } from './scalars';
import { withProps } from '../base/objects';

/** Format from a file name or URI: `.yaml`/`.yml`, `.json`, `.jsonc`, `.toml` (case-insensitive). */
export function formatFromPath(path: string): SourceFormat | null {
  const clean = path.replace(/[?#].*$/, '');
  const m = /\.([A-Za-z]+)$/.exec(clean);
  if (!m) return null;
  switch (m[1]!.toLowerCase()) {
    case 'yaml':
    case 'yml':
      return 'yaml';
    case 'json':
      return 'json';
    case 'jsonc':
      return 'jsonc';
    case 'toml':
      return 'toml';
    default:
      return null;
  }
}

export interface ParseOptions {
  /** What each scalar means (default: the YAML 1.2 core schema, JSON's own types). */
  interpret?: ScalarInterpreter;
  /** Skip the fast YAML and JSON readers (the differential test compares both). */
  exact?: boolean;
}

export function parseText(text: string, format: SourceFormat, limits?: Partial<ParseLimits>, options: ParseOptions = {}): ParsedFile {
  const safeText = typeof text === 'string' ? text : '';
  const bom = hasBom(safeText);
  const base = { format, text: safeText, bom, lineEnding: detectLineEnding(safeText) };
  let documents: ParsedDocument[] = [];
  const problems: ParseProblem[] = [];
  let comments: SourceComment[] = [];
  try {
    const lim = resolveLimits(limits);
    if (utf8LengthExceeds(safeText, lim.maxFileBytes)) {
      problems.push({
        code: 'too-large',
        severity: 'error',
        span: { start: 0, end: 0 },
        message: `File is larger than ${lim.maxFileBytes} bytes; it is not read.`,
      });
      return withProps(base, { documents: [], problems, suppressions: [], comments: [] });
    }
    const interpret = options.interpret ?? coreScalar;
    const read =
      format === 'yaml'
        ? (!options.exact && readYamlFast(safeText, lim, interpret)) || readYaml(safeText, lim, interpret)
        : format === 'toml'
          ? readToml(safeText, lim, bom)
          : (!options.exact && readJsonFast(safeText, format, lim)) || readJson(safeText, format, lim, bom);
    documents = read.documents;
    problems.push(...read.problems);
    comments = read.comments;
  } catch (e) {
    documents = [];
    problems.push(internalProblem(e));
  }
  let suppressions: ParsedFile['suppressions'] = [];
  try {
    suppressions = readSuppressions(safeText, comments, new LineIndex(safeText), problems);
  } catch (e) {
    problems.push(internalProblem(e));
  }
  // Libraries sometimes point one past the end (an unclosed quote at EOF): keep spans inside.
  const n = safeText.length;
  // They may also point between the two halves of a surrogate pair (an invalid LSP position):
  // widen to the whole character.
  const splits = (at: number) => at > 0 && at < n && isHighSurrogate(safeText.charCodeAt(at - 1)) && isLowSurrogate(safeText.charCodeAt(at));
  for (const p of problems) {
    let start = Math.max(0, Math.min(p.span.start, n));
    let end = Math.max(start, Math.min(p.span.end, n));
    if (splits(start)) start--;
    if (splits(end)) end++;
    p.span = { start, end };
  }
  problems.sort((a, b) => a.span.start - b.span.start || a.span.end - b.span.end);
  return withProps(base, { documents, problems, suppressions, comments: comments.map((c) => ({ start: c.start, end: c.end })) });
}

const isHighSurrogate = (c: number) => c >= 0xd800 && c <= 0xdbff;
const isLowSurrogate = (c: number) => c >= 0xdc00 && c <= 0xdfff;

function internalProblem(e: unknown): ParseProblem {
  const msg = e instanceof Error ? e.message : String(e);
  return {
    code: 'internal-error',
    severity: 'error',
    span: { start: 0, end: 0 },
    message: `The file could not be read: ${firstLine(msg)}`,
  };
}
