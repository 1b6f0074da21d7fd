import type { TextEdit } from '../base/findings';

/** Sorts edits by position, keeping the given order for edits at the same start. */
export function sortEdits(edits: readonly TextEdit[]): TextEdit[] {
  return edits
    .map((edit, i) => ({ edit, i }))
    .sort((a, b) => a.edit.span.start - b.edit.span.start || a.edit.span.end - b.edit.span.end || a.i - b.i)
    .map((x) => x.edit);
}

/**
 * Two edits conflict when they replace overlapping text, when both insert at the same point, or
 * when one inserts strictly inside the text the other replaces. Touching ranges do not conflict.
 */
export function editsConflict(a: TextEdit, b: TextEdit): boolean {
  const aEmpty = a.span.start === a.span.end;
  const bEmpty = b.span.start === b.span.end;
  if (aEmpty && bEmpty) return a.span.start === b.span.start;
  if (aEmpty) return b.span.start < a.span.start && a.span.start < b.span.end;
  if (bEmpty) return a.span.start < b.span.start && b.span.start < a.span.end;
  return a.span.start < b.span.end && b.span.start < a.span.end;
}

export function anyConflict(edits: readonly TextEdit[], others: readonly TextEdit[]): boolean {
  return edits.some((a) => others.some((b) => editsConflict(a, b)));
}

/**
 * Applies non-overlapping edits to `text`. Edits at the same offset apply in the given order.
 * Throws on overlapping or out-of-range edits: that is a bug in whoever built them.
 */
export function applyEdits(text: string, edits: readonly TextEdit[]): string {
  const sorted = sortEdits(edits);
  let out = '';
  let pos = 0;
  for (const edit of sorted) {
    const { start, end } = edit.span;
    if (!(Number.isInteger(start) && Number.isInteger(end)) || start < 0 || end < start || end > text.length) {
      throw new Error(`edit [${start}, ${end}) is outside the text (length ${text.length})`);
    }
    if (start < pos) throw new Error(`edits overlap at offset ${start}`);
    out += text.slice(pos, start) + edit.newText;
    pos = end;
  }
  return out + text.slice(pos);
}
