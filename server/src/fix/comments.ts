/**
 * Where the comments of a file are, so that edits can avoid them or say that they touch one.
 * The parse that built the tree already recorded them (`ParsedFile.comments`): asking costs
 * nothing. Only a hand-made ParsedFile without them is parsed again, once.
 */
import { parseText } from '../parse';
import type { ParsedFile, Span } from '../parse/types';

const reread = new WeakMap<ParsedFile, Span[]>();

/** Comment spans of the whole file, sorted by start. */
export function commentSpans(parsed: ParsedFile): Span[] {
  if (parsed.comments) return parsed.comments;
  let spans = reread.get(parsed);
  if (!spans) {
    spans = parseText(parsed.text, parsed.format, { maxFileBytes: Number.MAX_SAFE_INTEGER }).comments ?? [];
    reread.set(parsed, spans);
  }
  return spans;
}

/** Index of the first comment that ends after `pos` (comments are sorted and do not overlap). */
function firstEndingAfter(spans: Span[], pos: number): number {
  let lo = 0;
  let hi = spans.length;
  while (lo < hi) {
    const mid = (lo + hi) >>> 1;
    if (spans[mid]!.end > pos) hi = mid;
    else lo = mid + 1;
  }
  return lo;
}

/** True when some comment overlaps [start, end); for an empty range, when the point is inside one. */
export function rangeHasComment(parsed: ParsedFile, start: number, end: number): boolean {
  const spans = commentSpans(parsed);
  for (let i = firstEndingAfter(spans, start); i < spans.length; i++) {
    const c = spans[i]!;
    if (c.start >= Math.max(start, end)) break;
    if (start === end ? c.start < start && start < c.end : c.start < end && start < c.end) return true;
  }
  return false;
}

/** The comment that starts exactly at `pos`, if any. */
export function commentStartingAt(parsed: ParsedFile, pos: number): Span | undefined {
  const spans = commentSpans(parsed);
  const c = spans[firstEndingAfter(spans, pos)];
  return c && c.start === pos ? c : undefined;
}
