/** Helpers shared by the YAML and JSON readers. */
import type { LocatedScalar, ParseLimits, ParseProblem, Span } from './types';
import { DEFAULT_PARSE_LIMITS } from './types';

/**
 * The YAML composer recurses once per nesting level and gives up near 1,000 levels, so deeper
 * limits cannot be honoured safely (see parse/README.md).
 */
export const HARD_NESTING_CAP = 500;

/** A comment found in the source: `text` excludes the comment marker. */
export interface SourceComment {
  /** Offset of the comment marker (`#`, `//` or `/*`). */
  start: number;
  end: number;
  text: string;
}

/** A region of the original text whose nesting was too deep; it is read as one empty value. */
export interface Cut {
  start: number;
  end: number;
}

export function resolveLimits(limits?: Partial<ParseLimits>): ParseLimits {
  const merged = { ...DEFAULT_PARSE_LIMITS };
  if (limits) {
    for (const key of Object.keys(merged) as (keyof ParseLimits)[]) {
      const v = limits[key];
      if (typeof v === 'number' && Number.isFinite(v) && v >= 0) merged[key] = Math.floor(v);
    }
  }
  merged.maxNesting = Math.max(1, Math.min(merged.maxNesting, HARD_NESTING_CAP));
  return merged;
}

/** UTF-8 length of `text`, stopping early once it is known to exceed `limit`. */
export function utf8LengthExceeds(text: string, limit: number): boolean {
  if (text.length > limit) return true;
  if (text.length * 3 <= limit) return false;
  let bytes = 0;
  for (let i = 0; i < text.length; i++) {
    const c = text.charCodeAt(i);
    if (c < 0x80) bytes += 1;
    else if (c < 0x800) bytes += 2;
    else if (c >= 0xd800 && c <= 0xdbff && i + 1 < text.length) {
      const d = text.charCodeAt(i + 1);
      if (d >= 0xdc00 && d <= 0xdfff) {
        bytes += 4;
        i++;
      } else bytes += 3;
    } else bytes += 3;
    if (bytes > limit) return true;
  }
  return false;
}

/**
 * Replaces each cut region by a one-character placeholder followed by spaces, keeping every line
 * break so that all offsets and line numbers after (and inside) the region stay the same.
 */
export function blankRegions(text: string, cuts: Cut[], placeholder: string): string {
  if (cuts.length === 0) return text;
  const parts: string[] = [];
  let pos = 0;
  for (const cut of cuts) {
    parts.push(text.slice(pos, cut.start));
    parts.push(placeholder);
    parts.push(text.slice(cut.start + 1, cut.end).replace(/[^\r\n]/g, ' '));
    pos = cut.end;
  }
  parts.push(text.slice(pos));
  return parts.join('');
}

export function placeholderFor(text: string, span: Span): LocatedScalar {
  return { kind: 'scalar', value: null, raw: text.slice(span.start, span.end), style: 'plain', span: { ...span } };
}

export function tooDeepProblem(span: Span, maxNesting: number): ParseProblem {
  return {
    code: 'too-deep',
    severity: 'warning',
    span: { ...span },
    message: `Nesting deeper than ${maxNesting} levels; this part is read as an empty value.`,
  };
}

export function tooLongProblem(span: Span, length: number, maxListLength: number): ParseProblem {
  return {
    code: 'too-long',
    severity: 'warning',
    span: { ...span },
    message: `List of ${length} items is longer than ${maxListLength}; only the first ${maxListLength} are read.`,
  };
}

/**
 * Removes all but the last entry of each key, reporting the dropped ones. The last wins because
 * that is what the programs that read these files (common YAML and JSON loaders) do.
 */
export function dropDuplicateKeys<E extends { key: string; keySpan: Span }>(entries: E[], problems: ParseProblem[]): E[] {
  if (entries.length < 2) return entries;
  const lastIndex = new Map<string, number>();
  entries.forEach((e, i) => lastIndex.set(e.key, i));
  if (lastIndex.size === entries.length) return entries;
  const kept: E[] = [];
  entries.forEach((e, i) => {
    if (lastIndex.get(e.key) === i) kept.push(e);
    else
      problems.push({
        code: 'duplicate-key',
        severity: 'warning',
        span: { ...e.keySpan },
        message: `Duplicate key "${shorten(e.key)}": this value is ignored, the later one is used.`,
      });
  });
  return kept;
}

export function shorten(s: string, max = 60): string {
  const oneLine = s.replace(/\s+/g, ' ');
  return oneLine.length > max ? `${oneLine.slice(0, max - 1)}…` : oneLine;
}

export function firstLine(s: string): string {
  const line = s.split(/\r?\n/, 1)[0] ?? '';
  return shorten(line, 200);
}
