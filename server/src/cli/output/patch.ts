/**
 * A unified diff of one fixed file, built from where the fixes changed it (`TextChange`s): each
 * changed stretch, widened to whole lines and to the diff's context, is diffed on its own by
 * jsdiff and its hunks are moved to their place in the file. Comparing the whole texts instead
 * costs time in proportion to the file's length times its number of changes (Myers' algorithm),
 * which a file of 10,000 documents with a fix in each turns into minutes.
 */
import { formatPatch, structuredPatch, type StructuredPatchHunk } from 'diff';
import type { TextChange } from '../../fix/changes';

/** Unchanged lines shown around a change; jsdiff's own default, so hunks match a whole-text diff. */
const CONTEXT = 4;

/**
 * The offsets at which each line of `text` starts, as jsdiff splits lines: after each "\n" only
 * (parse/lineIndex.ts also breaks at a lone CR, so its line numbers would not match the hunks').
 */
function lineStarts(text: string): number[] {
  const starts = [0];
  for (let at = text.indexOf('\n'); at !== -1; at = text.indexOf('\n', at + 1)) starts.push(at + 1);
  return starts;
}

/** The lines of `text` in jsdiff's sense: a final line without "\n" counts, an empty tail does not. */
function lineCount(starts: readonly number[], text: string): number {
  return starts[starts.length - 1] === text.length ? starts.length - 1 : starts.length;
}

/** The index of the line holding `offset` (the number of "\n" before it). */
function lineOf(starts: readonly number[], offset: number): number {
  let lo = 0;
  let hi = starts.length - 1;
  while (lo < hi) {
    const mid = (lo + hi + 1) >> 1;
    if ((starts[mid] ?? Infinity) <= offset) lo = mid;
    else hi = mid - 1;
  }
  return lo;
}

/** Lines `[first, last)` of the old text and the new lines they became (0-based). */
interface LineRange {
  oldFirst: number;
  oldLast: number;
  newFirst: number;
  newLast: number;
}

/** Hunk lines of a stretch of text: each line with its prefix, and jsdiff's mark after a last line without "\n". */
function linesOf(prefix: string, text: string, into: string[]): void {
  let at = 0;
  while (at < text.length) {
    const nl = text.indexOf('\n', at);
    const end = nl === -1 ? text.length : nl;
    into.push(prefix + text.slice(at, end));
    if (nl === -1) into.push('\\ No newline at end of file');
    at = end + 1;
  }
}

/**
 * Above this edit length (lines removed plus added) in one stretch, jsdiff stops and the stretch's
 * lines are shown removed and added as they are: Myers' algorithm costs the stretch's length
 * times its edit length, and a stretch that large is a rewrite, not a fix.
 */
const MAX_EDIT_LENGTH = 2000;

/**
 * The unified diff from `before` to `after`, where `changes` (sorted, disjoint, as the fix loop
 * and `composeChanges` give them) cover every difference. The same text `createTwoFilesPatch`
 * prints for the two texts, up to where jsdiff would place a hunk inside a run of equal lines.
 */
export function unifiedPatch(
  oldName: string,
  newName: string,
  before: string,
  after: string,
  changes: readonly TextChange[],
  maxEditLength = MAX_EDIT_LENGTH,
): string {
  const oldStarts = lineStarts(before);
  const newStarts = lineStarts(after);
  const oldCount = lineCount(oldStarts, before);
  const newCount = lineCount(newStarts, after);
  // Each change as whole lines; changes on the same or adjacent lines go together.
  const ranges: LineRange[] = [];
  for (const c of changes) {
    const range: LineRange = {
      oldFirst: lineOf(oldStarts, c.oldStart),
      oldLast: Math.min(oldCount, lineOf(oldStarts, c.oldEnd) + 1),
      newFirst: lineOf(newStarts, c.newStart),
      newLast: Math.min(newCount, lineOf(newStarts, c.newEnd) + 1),
    };
    const last = ranges[ranges.length - 1];
    if (last && range.oldFirst <= last.oldLast) {
      last.oldLast = Math.max(last.oldLast, range.oldLast);
      last.newLast = Math.max(last.newLast, range.newLast);
    } else ranges.push(range);
  }
  // Each range is diffed with the unchanged lines around it, up to CONTEXT but never into the next
  // range; hunks whose context meets are joined, as a whole-text diff joins them.
  const hunks: StructuredPatchHunk[] = [];
  const at = (starts: readonly number[], text: string, line: number): number => starts[line] ?? text.length;
  ranges.forEach((r, k) => {
    const prev = ranges[k - 1];
    const next = ranges[k + 1];
    const lead = Math.min(CONTEXT, prev ? r.oldFirst - prev.oldLast : Math.min(r.oldFirst, r.newFirst));
    const trail = Math.min(CONTEXT, next ? next.oldFirst - r.oldLast : Math.min(oldCount - r.oldLast, newCount - r.newLast));
    const oldFrom = r.oldFirst - lead;
    const newFrom = r.newFirst - lead;
    const oldSlice = before.slice(at(oldStarts, before, oldFrom), at(oldStarts, before, r.oldLast + trail));
    const newSlice = after.slice(at(newStarts, after, newFrom), at(newStarts, after, r.newLast + trail));
    const patch = structuredPatch(oldName, newName, oldSlice, newSlice, undefined, undefined, { context: CONTEXT, maxEditLength });
    for (const h of patch?.hunks ?? [wholeHunk(oldSlice, newSlice, lead, trail, r)]) {
      const hunk = { ...h, oldStart: h.oldStart + oldFrom, newStart: h.newStart + newFrom };
      const last = hunks[hunks.length - 1];
      const overlap = last ? last.oldStart + last.oldLines - hunk.oldStart : -1;
      if (!last || overlap < 0) {
        hunks.push(hunk);
        continue;
      }
      // The shared lines are unchanged context at the end of one hunk and the start of the other.
      last.lines.push(...hunk.lines.slice(overlap));
      last.oldLines = hunk.oldStart + hunk.oldLines - last.oldStart;
      last.newLines = hunk.newStart + hunk.newLines - last.newStart;
    }
  });
  return formatPatch({ oldFileName: oldName, newFileName: newName, oldHeader: undefined, newHeader: undefined, hunks });
}

/** One hunk of a stretch too different to diff in bounded time: its old lines removed, its new lines added. */
function wholeHunk(oldSlice: string, newSlice: string, lead: number, trail: number, r: LineRange): StructuredPatchHunk {
  const oldStarts = lineStarts(oldSlice);
  const newStarts = lineStarts(newSlice);
  const oldEnd = oldStarts[lead + (r.oldLast - r.oldFirst)] ?? oldSlice.length;
  const newEnd = newStarts[lead + (r.newLast - r.newFirst)] ?? newSlice.length;
  const lines: string[] = [];
  linesOf(' ', oldSlice.slice(0, oldStarts[lead] ?? oldSlice.length), lines);
  linesOf('-', oldSlice.slice(oldStarts[lead] ?? oldSlice.length, oldEnd), lines);
  linesOf('+', newSlice.slice(newStarts[lead] ?? newSlice.length, newEnd), lines);
  linesOf(' ', oldSlice.slice(oldEnd), lines);
  return { oldStart: 1, oldLines: lead + (r.oldLast - r.oldFirst) + trail, newStart: 1, newLines: lead + (r.newLast - r.newFirst) + trail, lines };
}
