/**
 * Inserting keys as minimal text edits: whole `key: value` lines at a sibling's indentation in a
 * block map, `key = value` lines in a TOML table, members with their commas in a flow map or a
 * JSON object. Gives up (GiveUp) rather than break the text.
 */
import type { TextEdit } from '../base/findings';
import type { Concept } from '../fields/concepts';
import type { LocatedEntry, LocatedMap, ParsedFile, SourceFormat } from '../parse/types';
import { isBlank, keySpanWithQuotes, lineBreakOf, lineStartOf, nextLineStart } from './text';
import { giveUp, isScalarToken, skipSpaces } from './tokens';
import { commentStartingAt, rangeHasComment } from './comments';

/** Keys waiting to be written into one map, next to an anchor entry. */
export interface PendingInsert {
  map: LocatedMap;
  anchor: LocatedEntry | null;
  members: { concept: Concept; key: string; value: string }[];
}

/** What inserting needs of the renderer. */
export interface InsertContext {
  readonly text: string;
  readonly parsed: ParsedFile;
  readonly format: SourceFormat;
  readonly eol: string;
  readonly edits: TextEdit[];
  readonly removedCommas: Set<number>;
  risky(why: string): void;
  isFlow(map: LocatedMap): boolean;
  keyText(key: string, like: LocatedEntry | null): string;
}

export function renderInsert(ctx: InsertContext, p: PendingInsert): void {
  if (ctx.format === 'toml' && !ctx.isFlow(p.map)) renderTomlInsert(ctx, p);
  else if (ctx.isFlow(p.map)) renderFlowInsert(ctx, p);
  else renderBlockInsert(ctx, p);
}

function renderBlockInsert(ctx: InsertContext, p: PendingInsert): void {
  const text = ctx.text;
  const anchor = p.anchor;
  if (!anchor) giveUp('empty block map');
  const keySpan = keySpanWithQuotes(text, anchor.keySpan);
  const lineStart = lineStartOf(text, keySpan.start);
  const before = text.slice(lineStart, keySpan.start);
  const indent = isBlank(before) ? before : ' '.repeat(before.length);
  if (/\t/.test(indent)) giveUp('tab indentation');
  // A sibling that starts its line, or follows list dashes: the new key lands in the same column.
  if (!isBlank(before) && !/^(?: *- +)+$/.test(before)) ctx.risky('sibling key does not start its line');
  // Spacing after the colon: `key: value`, or aligned values when the sibling aligns them.
  let valueColumn: number | null = null;
  const value = anchor.value;
  if (value && value.kind === 'scalar') {
    const between = text.slice(keySpan.end, value.span.start);
    if (/^:[ ]{2,}$/.test(between)) valueColumn = value.span.start - lineStart;
  }
  const lines = p.members.map((m) => {
    const key = ctx.keyText(m.key, anchor);
    if (!isScalarToken(key, ctx.format)) ctx.risky('key text outside the token grammar');
    const pad = valueColumn === null ? 1 : Math.max(1, valueColumn - (indent.length + key.length + 1));
    return `${indent}${key}:${' '.repeat(pad)}${m.value}`;
  });
  const end = anchor.span.end;
  let at: number;
  if (end > 0 && text[end - 1] === '\n') {
    at = end;
  } else {
    const rest = text.slice(end, lineBreakOf(text, end));
    if (!/^[ \t]*(#.*)?$/.test(rest)) giveUp('text after the sibling entry');
    at = nextLineStart(text, end);
  }
  const atEndWithoutBreak = at === text.length && !text.endsWith('\n');
  const newText = atEndWithoutBreak ? lines.map((l) => ctx.eol + l).join('') : lines.map((l) => l + ctx.eol).join('');
  ctx.edits.push({ span: { start: at, end: at }, newText });
}

function renderFlowInsert(ctx: InsertContext, p: PendingInsert): void {
  const text = ctx.text;
  const map = p.map;
  const open = map.span.start;
  const close = map.span.end - 1;
  if (text[open] !== '{' || text[close] !== '}') giveUp('flow map without braces');
  if (ctx.format === 'yaml' && rangeHasComment(ctx.parsed, map.span.start, map.span.end)) giveUp('comments inside a YAML flow map');
  if (ctx.format === 'yaml') ctx.risky('insert into a YAML flow map');
  // TOML v1.0.0 inline tables stay on one line and have no trailing comma: the result is parsed.
  if (ctx.format === 'toml') ctx.risky('insert into a TOML inline table');
  const anchor = p.anchor;
  const members = (colon: string) => p.members.map((m) => `${ctx.keyText(m.key, anchor)}${colon}${m.value}`);
  if (!anchor && ctx.format === 'toml') giveUp('empty TOML inline table');
  for (const m of p.members) if (!isScalarToken(ctx.keyText(m.key, anchor), ctx.format)) ctx.risky('key text outside the token grammar');
  if (!anchor) {
    if (!isBlank(text.slice(open + 1, close))) giveUp('empty flow map with content');
    ctx.edits.push({ span: { start: open + 1, end: close }, newText: members(': ').join(', ') });
    return;
  }
  const keySpan = keySpanWithQuotes(text, anchor.keySpan);
  const valueStart = anchor.value ? anchor.value.span.start : keySpan.end;
  const colonText = text.slice(keySpan.end, valueStart);
  const colon =
    ctx.format === 'toml' ? (/^[ \t]*=[ \t]*$/.test(colonText) ? colonText : ' = ') : /^[ \t]*:[ \t]*$/.test(colonText) ? colonText : ': ';
  const after = anchor.span.end;
  // What follows the sibling on its line: an optional comma, then maybe a comment.
  let p1 = skipSpaces(text, after);
  const commaHere = text[p1] === ',';
  // A comma that a removal in this fix deletes does not count: the new member brings its own.
  const hasComma = commaHere && !ctx.removedCommas.has(p1);
  if (commaHere) p1 = skipSpaces(text, p1 + 1);
  const comment = commentStartingAt(ctx.parsed, p1);
  if (comment) p1 = skipSpaces(text, comment.end);
  const endsLine = p1 >= text.length || text[p1] === '\n' || text[p1] === '\r';
  const lineStart = lineStartOf(text, keySpan.start);
  const startsLine = isBlank(text.slice(lineStart, keySpan.start));
  if (endsLine && startsLine) {
    // One member per line: add lines after the sibling's line, commas between members.
    const indent = text.slice(lineStart, keySpan.start);
    const rendered = members(colon);
    const lines = rendered.map((m, i) => `${ctx.eol}${indent}${m}${hasComma || i < rendered.length - 1 ? ',' : ''}`);
    if (!hasComma) ctx.edits.push({ span: { start: after, end: after }, newText: ',' });
    const at = lineBreakOf(text, p1);
    ctx.edits.push({ span: { start: at, end: at }, newText: lines.join('') });
    return;
  }
  // Members on one line: `, key: value` right after the sibling, with the map's comma spacing.
  const sepMatch = /,([ \t]*)/.exec(text.slice(map.entries[0]!.span.end, map.span.end));
  const spacing = map.entries.length > 1 && sepMatch ? sepMatch[1] : ' ';
  const inline = members(colon)
    .map((m) => `,${spacing}${m}`)
    .join('');
  ctx.edits.push({ span: { start: after, end: after }, newText: inline });
}

/**
 * A `key = value` line after the sibling's line, in its table: same indentation and dotted
 * prefix, `=` aligned when the sibling aligns it. Valid by construction: the key is new in that
 * table (queueInsert checks) and the value is one token.
 */
function renderTomlInsert(ctx: InsertContext, p: PendingInsert): void {
  const text = ctx.text;
  const anchor = p.anchor;
  if (!anchor?.tomlKey || !anchor.value) giveUp('no key/value line to insert after');
  const keyStart = anchor.tomlKey.start;
  const lineStart = lineStartOf(text, keyStart);
  const indent = text.slice(lineStart, keyStart);
  if (!isBlank(indent)) giveUp('sibling does not start its line');
  const keyEnd = keySpanWithQuotes(text, anchor.keySpan).end;
  const separator = text.slice(keyEnd, anchor.value.span.start);
  const m = /^([ \t]*)=([ \t]*)$/.exec(separator);
  if (!m) giveUp('unusual separator after the sibling key');
  const eqColumn = keyEnd + m[1]!.length - lineStart;
  const lines = p.members.map((member) => {
    const key = ctx.keyText(member.key, anchor);
    const pad = m[1]!.length > 1 ? Math.max(1, eqColumn - (indent.length + key.length)) : m[1]!.length;
    return `${indent}${key}${' '.repeat(pad)}=${m[2]}${member.value}`;
  });
  const end = anchor.span.end;
  const rest = text.slice(end, lineBreakOf(text, end));
  if (!/^[ \t]*(#.*)?$/.test(rest)) giveUp('text after the sibling entry');
  const at = nextLineStart(text, end);
  const atEndWithoutBreak = at === text.length && !text.endsWith('\n');
  const newText = atEndWithoutBreak ? lines.map((l) => ctx.eol + l).join('') : lines.map((l) => l + ctx.eol).join('');
  ctx.edits.push({ span: { start: at, end: at }, newText });
}
