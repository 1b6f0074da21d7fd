/**
 * Removing a key as a minimal text edit: its whole line(s) in a block map or a TOML table, the
 * member and its comma in a flow map or a JSON object. With `keepComment`, a comment at the end
 * of the removed line stays. Gives up (GiveUp) rather than break the text.
 */
import type { TextEdit } from '../base/findings';
import type { Concept } from '../fields/concepts';
import type { LocatedEntry, LocatedMap, ParsedFile, SourceFormat } from '../parse/types';
import type { FieldSource } from '../setup/types';
import { commentStartingAt, rangeHasComment } from './comments';
import { isBlank, keySpanWithQuotes, lineBreakOf, lineStartOf, nextLineStart } from './text';
import { commaAfter, giveUp, skipSpaces } from './tokens';

/** What removal needs of the renderer: the text, where edits go, and how to flag a risky shape. */
export interface RemovalContext {
  readonly text: string;
  readonly parsed: ParsedFile;
  readonly format: SourceFormat;
  readonly edits: TextEdit[];
  readonly removed: Set<LocatedEntry>;
  readonly removedCommas: Set<number>;
  risky(why: string): void;
  isFlow(map: LocatedMap): boolean;
  sourceOf(concept: Concept): FieldSource | null;
}

/**
 * Removes a `key = value` line. With `keepComment`, a comment at the end of the line stays where
 * it was (the line keeps the comment alone); otherwise the whole line goes. An emptied table is
 * valid TOML.
 */
export function removeTomlLine(ctx: RemovalContext, entry: LocatedEntry, keepComment: boolean): void {
  const text = ctx.text;
  if (!entry.tomlKey) giveUp('entry is a table, not a key/value line');
  const keyStart = entry.tomlKey.start;
  const lineStart = lineStartOf(text, keyStart);
  if (!isBlank(text.slice(lineStart, keyStart))) giveUp('entry shares its line');
  const end = entry.span.end;
  const lineEnd = lineBreakOf(text, end);
  const rest = text.slice(end, lineEnd);
  const m = /^([ \t]*)(#.*)?$/.exec(rest);
  if (!m) giveUp('text after the entry on its line');
  if (m[2] && keepComment) {
    ctx.edits.push({ span: { start: keyStart, end: end + m[1]!.length }, newText: '' });
    return;
  }
  let from = lineStart;
  const to = nextLineStart(text, end);
  if (to === text.length && !text.endsWith('\n') && lineStart > 0) {
    // Last line without a line break: take the break before it instead, keeping the ending.
    from = lineStart - 1;
    if (from > 0 && text[from - 1] === '\r') from--;
  }
  ctx.edits.push({ span: { start: from, end: to }, newText: '' });
}

export function remove(ctx: RemovalContext, concept: Concept, keepComment: boolean): void {
  const source = ctx.sourceOf(concept);
  if (!source) return;
  const { entry, parent } = source;
  if (!parent.entries.includes(entry)) giveUp('entry is not in its map');
  ctx.removed.add(entry);
  if (ctx.format === 'toml' && !ctx.isFlow(parent)) removeTomlLine(ctx, entry, keepComment);
  else if (ctx.isFlow(parent)) removeFlow(ctx, entry, parent, keepComment);
  else removeBlock(ctx, entry, parent, keepComment);
}

export function removeBlock(ctx: RemovalContext, entry: LocatedEntry, map: LocatedMap, keepComment = false): void {
  const text = ctx.text;
  const index = map.entries.indexOf(entry);
  if (map.entries.length === 1) giveUp('removing the only key would empty its map');
  const keyStart = keySpanWithQuotes(text, entry.keySpan).start;
  const lineStart = lineStartOf(text, keyStart);
  const before = text.slice(lineStart, keyStart);
  const end = entry.span.end;
  const valueEndsLine = end > 0 && text[end - 1] === '\n';
  if (!valueEndsLine) {
    const rest = text.slice(end, lineBreakOf(text, end));
    if (!/^[ \t]*:?[ \t]*(#.*)?$/.test(rest)) giveUp('text after the entry on its line');
    if (rest.includes(':')) ctx.risky('colon after the removed entry');
  }
  // An anchor defined in the removed text may be what an alias elsewhere refers to.
  if (text.slice(keyStart, end).includes('&')) ctx.risky('removed text may define an anchor');
  if (isBlank(before) && keepComment && !valueEndsLine) {
    // `key: value  # why` -> `# why` at the key's indentation: the comment stays on its line.
    const lineEnd = lineBreakOf(text, end);
    const comment = commentStartingAt(ctx.parsed, skipSpaces(text, end));
    if (comment && comment.end <= lineEnd) {
      ctx.edits.push({ span: { start: keyStart, end: comment.start }, newText: '' });
      return;
    }
  }
  if (isBlank(before)) {
    let from = lineStart;
    const to = valueEndsLine ? end : nextLineStart(text, end);
    if (to === text.length && !text.endsWith('\n') && lineStart > 0) {
      // Last line without a line break: take the break before it instead, keeping the ending.
      from = lineStart - 1;
      if (from > 0 && text[from - 1] === '\r') from--;
    }
    ctx.edits.push({ span: { start: from, end: to }, newText: '' });
    return;
  }
  if (/^[ \t]*-[ \t]+$/.test(before) && index === 0) {
    // First key of a list item (`- key: value`): the next key moves up behind the dash.
    const next = map.entries[1]!;
    const nextStart = keySpanWithQuotes(text, next.keySpan).start;
    if (rangeHasComment(ctx.parsed, keyStart, nextStart)) giveUp('comment between list-item keys');
    ctx.risky('next key moves up behind a list dash');
    ctx.edits.push({ span: { start: keyStart, end: nextStart }, newText: '' });
    return;
  }
  giveUp('entry shares its line');
}

export function removeFlow(ctx: RemovalContext, entry: LocatedEntry, map: LocatedMap, keepComment = false): void {
  const text = ctx.text;
  if (ctx.format === 'yaml') ctx.risky('removal from a YAML flow map');
  if (ctx.format === 'toml') ctx.risky('removal from a TOML inline table');
  const index = map.entries.indexOf(entry);
  const keyStart = entry.tomlKey?.start ?? keySpanWithQuotes(text, entry.keySpan).start;
  const after = entry.span.end;
  let p = skipSpaces(text, after);
  const hasComma = text[p] === ',';
  const commaEnd = hasComma ? p + 1 : after;
  p = skipSpaces(text, commaEnd);
  const comment = commentStartingAt(ctx.parsed, p);
  if (comment) p = skipSpaces(text, comment.end);
  const endsLine = p >= text.length || text[p] === '\n' || text[p] === '\r';
  const lineStart = lineStartOf(text, keyStart);
  const startsLine = isBlank(text.slice(lineStart, keyStart));
  if (endsLine && startsLine) {
    // Keeping a trailing comment: only the member (and its comma) goes, the comment stays.
    const keepFrom = keepComment && comment ? comment.start : -1;
    if (keepFrom >= 0) ctx.edits.push({ span: { start: keyStart, end: keepFrom }, newText: '' });
    else ctx.edits.push({ span: { start: lineStart, end: nextLineStart(text, p) }, newText: '' });
    if (!hasComma && index > 0) {
      const comma = commaAfter(text, map.entries[index - 1]!.span.end, ctx.parsed);
      if (comma < 0) giveUp('no comma after the previous member');
      ctx.removedCommas.add(comma);
      ctx.edits.push({ span: { start: comma, end: comma + 1 }, newText: '' });
    }
    return;
  }
  if (hasComma) {
    ctx.edits.push({ span: { start: keyStart, end: skipSpaces(text, commaEnd) }, newText: '' });
  } else if (index > 0) {
    const comma = commaAfter(text, map.entries[index - 1]!.span.end, ctx.parsed);
    if (comma < 0) giveUp('no comma after the previous member');
    ctx.removedCommas.add(comma);
    ctx.edits.push({ span: { start: comma, end: after }, newText: '' });
  } else {
    ctx.edits.push({ span: { start: keyStart, end: after }, newText: '' });
  }
}
