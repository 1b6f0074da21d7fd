/**
 * JSON / JSONC text -> one located document, via jsonc-parser.
 *
 * jsonc-parser recurses once per nesting level, so a scanner pass (iterative) first finds
 * comments, trailing commas and regions nested deeper than the limit; those regions are blanked
 * (same length, line breaks kept) before the tree is built.
 */
import { createScanner, parseTree, printParseErrorCode } from 'jsonc-parser';
import type { Node as JsonNode, ParseError } from 'jsonc-parser';
import type { LocatedEntry, LocatedNode, ParsedDocument, ParseLimits, ParseProblem, SourceFormat, Span } from './types';
import { blankRegions, dropDuplicateKeys, placeholderFor, tooDeepProblem, tooLongProblem, type Cut, type SourceComment } from './shared';

export interface JsonReadResult {
  documents: ParsedDocument[];
  problems: ParseProblem[];
  comments: SourceComment[];
}

// jsonc-parser's SyntaxKind is an ambient const enum (not usable with isolatedModules).
const OPEN_BRACE = 1;
const CLOSE_BRACE = 2;
const OPEN_BRACKET = 3;
const CLOSE_BRACKET = 4;
const COMMA = 5;
const LINE_COMMENT = 12;
const BLOCK_COMMENT = 13;
const LINE_BREAK = 14;
const TRIVIA = 15;
const EOF = 17;

const ERROR_MESSAGES: Record<string, string> = {
  InvalidSymbol: 'Unexpected symbol.',
  InvalidNumberFormat: 'Invalid number.',
  PropertyNameExpected: 'Property name expected.',
  ValueExpected: 'Value expected.',
  ColonExpected: 'Colon expected.',
  CommaExpected: 'Comma expected.',
  CloseBraceExpected: 'Closing brace expected.',
  CloseBracketExpected: 'Closing bracket expected.',
  EndOfFileExpected: 'End of file expected.',
  InvalidCommentToken: 'Invalid comment.',
  UnexpectedEndOfComment: 'Comment is not closed.',
  UnexpectedEndOfString: 'String is not closed.',
  UnexpectedEndOfNumber: 'Number is not complete.',
  InvalidUnicode: 'Invalid unicode escape.',
  InvalidEscapeCharacter: 'Invalid escape character.',
  InvalidCharacter: 'Invalid character.',
};

export function readJson(text: string, format: SourceFormat, limits: ParseLimits, bom: boolean): JsonReadResult {
  const problems: ParseProblem[] = [];
  // The scanner does not know U+FEFF: a space of the same length keeps every offset.
  const source = bom ? ` ${text.slice(1)}` : text;
  const { comments, cuts, trailingCommas, nonFinite } = scanJson(source, limits.maxNesting);
  for (const cut of cuts) problems.push(tooDeepProblem(cut, limits.maxNesting));
  for (const t of nonFinite) {
    problems.push({
      code: 'json-non-finite',
      severity: 'warning',
      span: { ...t },
      message: `${text.slice(t.start, t.end)} is not a JSON value (Python's json module reads and writes it as a float).`,
    });
  }
  if (format === 'json') {
    for (const c of comments) {
      problems.push({
        code: 'json-comment',
        severity: 'warning',
        span: { start: c.start, end: c.end },
        message: 'Comments are not allowed in strict JSON (rename the file to .jsonc if the reader accepts them).',
      });
    }
    for (const at of trailingCommas) {
      problems.push({
        code: 'json-trailing-comma',
        severity: 'warning',
        span: { start: at, end: at + 1 },
        message: 'Trailing commas are not allowed in strict JSON.',
      });
    }
  }

  const errors: ParseError[] = [];
  // Non-finite tokens read as a one-character number placeholder; the converter restores them.
  const blanked = [...cuts, ...nonFinite].sort((a, b) => a.start - b.start);
  const tree = parseTree(blankRegions(source, blanked, '0'), errors, {
    allowTrailingComma: true,
    disallowComments: false,
    allowEmptyContent: false,
  });
  for (const e of errors) {
    const name = printParseErrorCode(e.error);
    problems.push({
      code: 'json-syntax',
      severity: 'error',
      span: { start: e.offset, end: e.offset + e.length },
      message: ERROR_MESSAGES[name] ?? name,
    });
  }
  const converter = new JsonConverter(text, limits, new Map(cuts.map((c) => [c.start, c])), problems, new Map(nonFinite.map((c) => [c.start, c])));
  const root = tree ? converter.convert(tree, 0) : null;
  return { documents: [{ index: 0, root, span: { start: 0, end: text.length } }], problems, comments };
}

const NON_FINITE_TOKEN = /-?(?:NaN|Infinity)(?![A-Za-z0-9_$])/y;
/** jsonc-parser's SyntaxKind.Unknown: a token outside the JSON grammar. */
const UNKNOWN = 16;

function scanJson(text: string, maxNesting: number): { comments: SourceComment[]; cuts: Cut[]; trailingCommas: number[]; nonFinite: Cut[] } {
  const nonFinite: Cut[] = [];
  let nonFiniteEnd = -1;
  const comments: SourceComment[] = [];
  const cuts: Cut[] = [];
  const trailingCommas: number[] = [];
  const scanner = createScanner(text, false);
  let depth = 0;
  let cutStart = -1;
  let cutDepth = 0;
  let lastComma = -1;
  for (let kind = scanner.scan(); kind !== EOF; kind = scanner.scan()) {
    const offset = scanner.getTokenOffset();
    if (offset < nonFiniteEnd) continue;
    if (kind === UNKNOWN && cutStart < 0) {
      NON_FINITE_TOKEN.lastIndex = offset;
      const m = NON_FINITE_TOKEN.exec(text);
      if (m) {
        nonFinite.push({ start: offset, end: offset + m[0].length });
        nonFiniteEnd = offset + m[0].length;
        lastComma = -1;
        continue;
      }
    }
    switch (kind) {
      case LINE_COMMENT:
      case BLOCK_COMMENT: {
        const raw = text.slice(offset, offset + scanner.getTokenLength());
        const body = kind === LINE_COMMENT ? raw.slice(2) : raw.replace(/^\/\*/, '').replace(/\*\/$/, '');
        comments.push({ start: offset, end: offset + raw.length, text: body });
        continue;
      }
      case LINE_BREAK:
      case TRIVIA:
        continue;
      case OPEN_BRACE:
      case OPEN_BRACKET:
        depth++;
        if (depth > maxNesting && cutStart < 0) {
          cutStart = offset;
          cutDepth = depth;
        }
        break;
      case CLOSE_BRACE:
      case CLOSE_BRACKET:
        if (lastComma >= 0) trailingCommas.push(lastComma);
        if (cutStart >= 0 && depth === cutDepth) {
          cuts.push({ start: cutStart, end: offset + 1 });
          cutStart = -1;
        }
        depth = Math.max(0, depth - 1);
        break;
      default:
        break;
    }
    lastComma = kind === COMMA ? offset : -1;
  }
  if (cutStart >= 0) cuts.push({ start: cutStart, end: text.length });
  return { comments, cuts, trailingCommas, nonFinite };
}

class JsonConverter {
  constructor(
    private readonly text: string,
    private readonly limits: ParseLimits,
    private readonly cutStarts: Map<number, Cut>,
    private readonly problems: ParseProblem[],
    /** NaN / Infinity / -Infinity tokens, by start offset. */
    private readonly nonFinite: Map<number, Cut> = new Map(),
  ) {}

  private spanOf(n: JsonNode): Span {
    return { start: n.offset, end: n.offset + n.length };
  }

  convert(n: JsonNode, depth: number): LocatedNode {
    const span = this.spanOf(n);
    const cut = this.cutStarts.get(span.start);
    if (cut) return placeholderFor(this.text, cut);
    if (n.type === 'object' || n.type === 'array') {
      if (depth + 1 > this.limits.maxNesting) {
        this.problems.push(tooDeepProblem(span, this.limits.maxNesting));
        return placeholderFor(this.text, span);
      }
    }
    const kids = n.children ?? [];
    if (n.type === 'object') {
      const entries: LocatedEntry[] = [];
      for (const prop of kids) {
        const keyNode = prop.children?.[0];
        const valueNode = prop.children?.[1];
        if (!keyNode) continue;
        const keySpan = this.spanOf(keyNode);
        const value = valueNode ? this.convert(valueNode, depth + 1) : null;
        const key = typeof keyNode.value === 'string' ? keyNode.value : this.text.slice(keySpan.start, keySpan.end);
        const end = value ? value.span.end : this.afterColon(keySpan.end);
        entries.push({ key, keySpan, value, span: { start: keySpan.start, end } });
      }
      return { kind: 'map', entries: dropDuplicateKeys(entries, this.problems), style: 'flow', span };
    }
    if (n.type === 'array') {
      const count = Math.min(kids.length, this.limits.maxListLength);
      const items: LocatedNode[] = [];
      for (let i = 0; i < count; i++) items.push(this.convert(kids[i]!, depth + 1));
      if (kids.length > count) {
        this.problems.push(tooLongProblem({ start: kids[count]!.offset, end: span.end }, kids.length, this.limits.maxListLength));
      }
      return { kind: 'list', items, style: 'flow', span };
    }
    const token = n.type === 'number' ? this.nonFinite.get(span.start) : undefined;
    if (token) {
      const tokenRaw = this.text.slice(token.start, token.end);
      // Typed as the generic reading does; the consumer stage's loader dialect decides whether it is valid.
      const value = tokenRaw === 'NaN' ? NaN : tokenRaw.startsWith('-') ? -Infinity : Infinity;
      return { kind: 'scalar', value, raw: tokenRaw, style: 'plain', span: { start: token.start, end: token.end } };
    }
    const raw = this.text.slice(span.start, span.end);
    const value = n.type === 'string' || n.type === 'number' || n.type === 'boolean' ? (n.value as string | number | boolean) : null;
    return { kind: 'scalar', value, raw, style: n.type === 'string' ? 'double' : 'plain', span };
  }

  private afterColon(keyEnd: number): number {
    let i = keyEnd;
    while (i < this.text.length && /\s/.test(this.text[i]!)) i++;
    return this.text[i] === ':' ? i + 1 : keyEnd;
  }
}
