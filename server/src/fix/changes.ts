/**
 * Where a text changed: the stretches of an original text that edits replaced, kept in step with
 * the edits of every fix round, so that whoever prints the change (a unified diff) looks only at
 * those stretches and never compares the whole texts. The cost is linear in the number of edits.
 */
import type { TextEdit } from '../base/findings';
import { sortEdits } from './apply';

/** `[oldStart, oldEnd)` of the original text became `[newStart, newEnd)` of the current text. */
export interface TextChange {
  oldStart: number;
  oldEnd: number;
  newStart: number;
  newEnd: number;
}

/**
 * The changes from the original text to the text after `edits`, given the changes from the
 * original to the text the edits apply to. `changes` are sorted and disjoint (as this returns
 * them); `edits` are the non-overlapping edits of one round (as `applyEdits` takes them). Changes
 * and edits that overlap or touch become one change.
 */
export function composeChanges(changes: readonly TextChange[], edits: readonly TextEdit[]): TextChange[] {
  const sorted = sortEdits(edits);
  const out: TextChange[] = [];
  let i = 0;
  let j = 0;
  // current - original, after the changes taken so far; next - current, after the edits taken so far.
  let shiftOld = 0;
  let shiftNew = 0;
  for (;;) {
    const firstChange = changes[i];
    const firstEdit = sorted[j];
    if (!firstChange && !firstEdit) break;
    const start = Math.min(firstChange?.newStart ?? Infinity, firstEdit?.span.start ?? Infinity);
    const shiftOldBefore = shiftOld;
    const shiftNewBefore = shiftNew;
    let end = start;
    for (;;) {
      const c = changes[i];
      const e = sorted[j];
      if (c && c.newStart <= end) {
        i++;
        end = Math.max(end, c.newEnd);
        shiftOld += c.newEnd - c.newStart - (c.oldEnd - c.oldStart);
      } else if (e && e.span.start <= end) {
        j++;
        end = Math.max(end, e.span.end);
        shiftNew += e.newText.length - (e.span.end - e.span.start);
      } else break;
    }
    out.push({ oldStart: start - shiftOldBefore, oldEnd: end - shiftOld, newStart: start + shiftNewBefore, newEnd: end + shiftNew });
  }
  return out;
}
