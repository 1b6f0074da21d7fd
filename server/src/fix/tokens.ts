/**
 * The token grammar of what fixes write (numbers, strings, words per format), and small text and
 * tree walkers the renderer uses. Pure functions over text and the located tree.
 */
import type { LocatedMap, LocatedNode, LocatedScalar, ParsedFile, SourceFormat } from '../parse/types';
import { commentStartingAt } from './comments';

/** Thrown inside rendering to give up on the whole fix. */
export class GiveUp extends Error {}

export function giveUp(why: string): never {
  throw new GiveUp(why);
}

export const JSON_NUMBER = /^-?(?:0|[1-9]\d*)(?:\.\d+)?(?:[eE][-+]?\d+)?$/;
export const YAML_NUMBER = /^[-+]?(?:\d+\.?\d*|\.\d+)(?:[eE][-+]?\d+)?$/;
/** A JSON string, without the raw characters some YAML readers take for line breaks. */
export const JSON_STRING = /^"(?:[^"\\\u0000-\u001f\u0080-\u009f\u2028\u2029\ufeff]|\\(?:["\\/bfnrt]|u[0-9a-fA-F]{4}))*"$/;
/** YAML plain words: no indicator, no `: ` or ` #`, nothing a flow collection stops at. */
export const YAML_WORD = /^[A-Za-z_][A-Za-z0-9_.+-]*$/;
export const YAML_SINGLE = /^'(?:[^'\r\n]|'')*'$/;
/** TOML v1.0.0 tokens: numbers (no leading zeros, digits on both sides of a dot), one-line strings. */
export const TOML_NUMBER = /^[-+]?(?:0|[1-9]\d*)(?:\.\d+)?(?:[eE][-+]?\d+)?$/;
export const TOML_BASIC = /^"(?:[^"\\\u0000-\u001f\u007f]|\\(?:["\\bfnrt]|u[0-9a-fA-F]{4}))*"$/;
export const TOML_LITERAL = /^'[^'\u0000-\u0008\u000a-\u001f\u007f]*'$/;
export const TOML_BARE_KEY = /^[A-Za-z0-9_-]+$/;
/** The leading segments of a dotted TOML key (`scheduler.`, `"a b" . c.`), up to the last one. */
export const TOML_KEY_PREFIX = /^(?:(?:[A-Za-z0-9_-]+|"(?:[^"\\\r\n]|\\.)*"|'[^'\r\n]*')[ \t]*\.[ \t]*)*$/;

/** True when `text` is a number token that YAML and (for JSON files) JSON read as written. */
export function isNumberToken(text: string, format: SourceFormat): boolean {
  return (format === 'yaml' ? YAML_NUMBER : format === 'toml' ? TOML_NUMBER : JSON_NUMBER).test(text);
}

/**
 * True when `text` is one complete scalar token of the format on one line, which ends where it is
 * written in block and flow context alike.
 */
export function isScalarToken(text: string, format: SourceFormat): boolean {
  if (format === 'toml') return TOML_BASIC.test(text) || TOML_LITERAL.test(text) || TOML_NUMBER.test(text) || text === 'true' || text === 'false';
  if (JSON_STRING.test(text) || isNumberToken(text, format)) return true;
  if (format !== 'yaml') return text === 'true' || text === 'false' || text === 'null';
  return YAML_WORD.test(text) || YAML_SINGLE.test(text);
}

/** `[n, n, ...]` of number tokens (an inserted beta list). */
export function isNumberList(text: string, format: SourceFormat): boolean {
  const m = /^\[(.*)\]$/.exec(text);
  return m !== null && m[1]!.split(', ').every((n) => isNumberToken(n, format));
}

export function skipSpaces(text: string, pos: number): number {
  while (pos < text.length && (text[pos] === ' ' || text[pos] === '\t')) pos++;
  return pos;
}

/** Offset of the comma that follows `pos` past whitespace and comments, or -1. */
export function commaAfter(text: string, pos: number, parsed: ParsedFile): number {
  let p = pos;
  for (let guard = 0; guard < 10_000 && p < text.length; guard++) {
    const c = text[p];
    if (c === ',') return p;
    if (c === ' ' || c === '\t' || c === '\n' || c === '\r') {
      p++;
      continue;
    }
    const comment = commentStartingAt(parsed, p);
    if (!comment) return -1;
    p = comment.end;
  }
  return -1;
}

/** Visits every map of a tree. Iterative and bounded. */
export function walkMaps(root: LocatedNode | null, visit: (map: LocatedMap) => void): void {
  const stack: LocatedNode[] = root ? [root] : [];
  let budget = 100_000;
  while (stack.length > 0 && budget-- > 0) {
    const node = stack.pop()!;
    if (node.kind === 'map') {
      visit(node);
      for (const e of node.entries) if (e.value && e.value.kind !== 'scalar') stack.push(e.value);
    } else if (node.kind === 'list') {
      for (const item of node.items) if (item.kind !== 'scalar') stack.push(item);
    }
  }
}

/** Visits scalars (map values and list items) until `visit` returns true. Iterative and bounded. */
export function walkScalars(root: LocatedNode | null, visit: (s: LocatedScalar) => boolean): void {
  const stack: LocatedNode[] = root ? [root] : [];
  let budget = 100_000;
  while (stack.length > 0 && budget-- > 0) {
    const node = stack.pop()!;
    if (node.kind === 'scalar') {
      if (visit(node)) return;
    } else if (node.kind === 'map') {
      for (let i = node.entries.length - 1; i >= 0; i--) {
        const v = node.entries[i]!.value;
        if (v) stack.push(v);
      }
    } else {
      for (let i = node.items.length - 1; i >= 0; i--) stack.push(node.items[i]!);
    }
  }
}
