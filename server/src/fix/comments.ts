/** Where the comments of a file are, so that edits can avoid them or say that they touch one. */
import { Parser } from 'yaml';
import { createScanner } from 'jsonc-parser';
import type { ParsedFile, Span } from '../parse/types';

const cache = new WeakMap<ParsedFile, Span[]>();

// jsonc-parser's SyntaxKind is a const enum (not importable under isolatedModules).
const JSON_LINE_COMMENT = 12;
const JSON_BLOCK_COMMENT = 13;
const JSON_EOF = 17;

/** Comment spans of the whole file, sorted by start. Computed once per parsed file. */
export function commentSpans(parsed: ParsedFile): Span[] {
  let spans = cache.get(parsed);
  if (!spans) {
    spans = parsed.format === 'yaml' ? yamlComments(parsed.text) : jsonComments(parsed.text);
    spans.sort((a, b) => a.start - b.start);
    cache.set(parsed, spans);
  }
  return spans;
}

function yamlComments(text: string): Span[] {
  const spans: Span[] = [];
  // The concrete syntax tree keeps every comment token with its offset; walk it generically so
  // that comments in flow collections, document starts and ends are all found.
  const stack: unknown[] = [];
  try {
    for (const token of new Parser().parse(text)) stack.push(token);
  } catch {
    return fallbackHashComments(text);
  }
  let visited = 0;
  while (stack.length > 0) {
    const node = stack.pop();
    if (++visited > 10_000_000) break;
    if (Array.isArray(node)) {
      for (const child of node) stack.push(child);
    } else if (node && typeof node === 'object') {
      const token = node as { type?: unknown; offset?: unknown; source?: unknown };
      if (token.type === 'comment' && typeof token.offset === 'number' && typeof token.source === 'string') {
        spans.push({ start: token.offset, end: token.offset + token.source.length });
      }
      for (const value of Object.values(node)) if (value && typeof value === 'object') stack.push(value);
    }
  }
  return spans;
}

/** Conservative fallback: any `#` after whitespace or at a line start starts a comment. */
function fallbackHashComments(text: string): Span[] {
  const spans: Span[] = [];
  const re = /(^|[ \t])#[^\r\n]*/gm;
  for (let m = re.exec(text); m; m = re.exec(text)) {
    const start = m.index + m[1].length;
    spans.push({ start, end: m.index + m[0].length });
  }
  return spans;
}

function jsonComments(text: string): Span[] {
  const spans: Span[] = [];
  const scanner = createScanner(text, false);
  for (let kind = scanner.scan(); kind !== JSON_EOF; kind = scanner.scan()) {
    if (kind === JSON_LINE_COMMENT || kind === JSON_BLOCK_COMMENT) {
      const start = scanner.getTokenOffset();
      spans.push({ start, end: start + scanner.getTokenLength() });
    }
  }
  return spans;
}

/** True when some comment overlaps [start, end); for an empty range, when the point is inside one. */
export function rangeHasComment(parsed: ParsedFile, start: number, end: number): boolean {
  for (const c of commentSpans(parsed)) {
    if (c.start >= Math.max(start, end)) break;
    if (start === end ? c.start < start && start < c.end : c.start < end && start < c.end) return true;
  }
  return false;
}
