/**
 * The fast JSON reader: one pass over the text, with an explicit stack, straight to the located
 * tree. It reads well-formed JSON (and, for `.jsonc`, comments and trailing commas) and gives up,
 * returning null, on anything else: a syntax error, a comment or trailing comma in a `.json`
 * file, a BOM, a control character in a string, whitespace JSON does not allow, nesting or lists
 * past the limits. The exact reader (json.ts, jsonc-parser) then reads the
 * file and reports what is wrong; the differential test keeps the two identical.
 */
import { dropDuplicateKeys, type SourceComment } from './shared';
import type { JsonReadResult } from './json';
import type { LocatedEntry, LocatedList, LocatedMap, LocatedNode, LocatedScalar, ParseLimits, ParseProblem, SourceFormat } from './types';

class GiveUp extends Error {}
const giveUp = (): never => {
  throw new GiveUp();
};

interface Frame {
  node: LocatedMap | LocatedList;
  /** For a map: the key read last, waiting for its value. */
  key: LocatedScalar | null;
  /** A value (or key) was read since the last comma or the opening bracket. */
  filled: boolean;
  /** A comma was read after the last value. */
  comma: boolean;
}

export function readJsonFast(text: string, format: SourceFormat, limits: ParseLimits): JsonReadResult | null {
  if (text.length === 0 || text.charCodeAt(0) === 0xfeff) return null;
  try {
    return new Reader(text, format === 'jsonc', limits).read();
  } catch (e) {
    if (e instanceof GiveUp) return null;
    throw e;
  }
}

class Reader {
  private pos = 0;
  private readonly comments: SourceComment[] = [];
  private readonly problems: ParseProblem[] = [];

  constructor(
    private readonly text: string,
    private readonly jsonc: boolean,
    private readonly limits: ParseLimits,
  ) {}

  read(): JsonReadResult {
    const text = this.text;
    const stack: Frame[] = [];
    let root: LocatedNode | null = null;
    for (;;) {
      this.skipSpace();
      if (this.pos >= text.length) break;
      const c = text.charCodeAt(this.pos);
      const top = stack[stack.length - 1]!;
      if (c === 0x7b /* { */ || c === 0x5b /* [ */) {
        if (!top && root) giveUp();
        this.expectValueSlot(top);
        if (stack.length + 1 > this.limits.maxNesting) giveUp();
        const span = { start: this.pos, end: this.pos };
        const node: LocatedMap | LocatedList =
          c === 0x7b ? { kind: 'map', entries: [], style: 'flow', span } : { kind: 'list', items: [], style: 'flow', span };
        this.pos++;
        stack.push({ node, key: null, filled: false, comma: false });
        continue;
      }
      if (c === 0x7d /* } */ || c === 0x5d /* ] */) {
        if (!top || (c === 0x7d) !== (top.node.kind === 'map') || top.key) giveUp();
        if (top.comma && !this.jsonc) giveUp(); // a trailing comma in strict JSON: the exact reader warns
        this.pos++;
        top.node.span.end = this.pos;
        stack.pop();
        const node = top.node;
        if (node.kind === 'map') node.entries = dropDuplicateKeys(node.entries, this.problems);
        if (!this.place(stack, node)) root = node;
        continue;
      }
      if (c === 0x2c /* , */) {
        if (!top || !top.filled || top.key) giveUp();
        top.filled = false;
        top.comma = true;
        this.pos++;
        continue;
      }
      if (c === 0x3a /* : */) {
        if (!top || top.node.kind !== 'map' || !top.key || top.filled) giveUp();
        top.filled = true; // the key's colon: a value must follow
        this.pos++;
        continue;
      }
      if (!top && root) giveUp();
      const scalar = this.scalar(c);
      if (top && top.node.kind === 'map' && !top.key) {
        // A key: a string, then a colon.
        if (top.filled || scalar.style !== 'double') giveUp();
        top.key = scalar;
        top.comma = false;
        continue;
      }
      this.expectValueSlot(top);
      if (!this.place(stack, scalar)) root = scalar;
    }
    if (stack.length > 0 || !root) giveUp();
    return { documents: [{ index: 0, root, span: { start: 0, end: text.length } }], problems: this.problems, comments: this.comments };
  }

  /** A value may start here: top level (once), a list slot, or after a key's colon. */
  private expectValueSlot(top: Frame | undefined): void {
    if (!top) return;
    if (top.node.kind === 'list') {
      if (top.filled) giveUp();
      if (top.node.items.length >= this.limits.maxListLength) giveUp();
      return;
    }
    if (!top.key || !top.filled) giveUp();
  }

  /** Adds a finished value to the collection on top; false when it is the root. */
  private place(stack: Frame[], node: LocatedNode): boolean {
    const top = stack[stack.length - 1];
    if (!top) return false;
    if (top.node.kind === 'list') {
      top.node.items.push(node);
      top.filled = true;
      top.comma = false;
      return true;
    }
    const key = top.key!;
    const entry: LocatedEntry = { key: key.value as string, keySpan: key.span, value: node, span: { start: key.span.start, end: node.span.end } };
    top.node.entries.push(entry);
    top.key = null;
    top.filled = true;
    top.comma = false;
    return true;
  }

  private scalar(c: number): LocatedScalar {
    const text = this.text;
    const start = this.pos;
    if (c === 0x22 /* " */) {
      let i = start + 1;
      let escaped = false;
      for (;;) {
        if (i >= text.length) giveUp();
        const d = text.charCodeAt(i);
        if (d === 0x22) break;
        if (d < 0x20) giveUp();
        if (d === 0x5c /* \ */) {
          escaped = true;
          i += 2;
          continue;
        }
        i++;
      }
      this.pos = i + 1;
      const raw = text.slice(start, this.pos);
      let value: string;
      if (!escaped) value = raw.slice(1, -1);
      else {
        try {
          value = JSON.parse(raw) as string;
        } catch {
          return giveUp();
        }
      }
      return { kind: 'scalar', value, raw, style: 'double', span: { start, end: this.pos } };
    }
    let value: number | boolean | null;
    if (text.startsWith('true', start)) {
      value = true;
      this.pos += 4;
    } else if (text.startsWith('false', start)) {
      value = false;
      this.pos += 5;
    } else if (text.startsWith('null', start)) {
      value = null;
      this.pos += 4;
    } else {
      NUMBER.lastIndex = start;
      const m = NUMBER.exec(text);
      if (!m || m[0].length === 0) return giveUp();
      this.pos += m[0].length;
      value = Number(m[0]);
    }
    // A literal runs into a letter or digit (`truex`, `1a`): not JSON.
    if (this.pos < text.length && /[A-Za-z0-9_.$+-]/.test(text[this.pos]!)) giveUp();
    return { kind: 'scalar', value, raw: text.slice(start, this.pos), style: 'plain', span: { start, end: this.pos } };
  }

  /** Skips JSON whitespace and (in JSONC) comments, which are recorded. */
  private skipSpace(): void {
    const text = this.text;
    while (this.pos < text.length) {
      const c = text.charCodeAt(this.pos);
      if (c === 0x20 || c === 0x0a || c === 0x0d || c === 0x09) {
        this.pos++;
        continue;
      }
      if (c === 0x2f /* / */) {
        if (!this.jsonc) giveUp(); // a comment in strict JSON: the exact reader warns
        const next = text.charCodeAt(this.pos + 1);
        const start = this.pos;
        if (next === 0x2f) {
          let end = start + 2;
          while (end < text.length && text.charCodeAt(end) !== 0x0a && text.charCodeAt(end) !== 0x0d) end++;
          this.comments.push({ start, end, text: text.slice(start + 2, end) });
          this.pos = end;
          continue;
        }
        if (next === 0x2a) {
          const close = text.indexOf('*/', start + 2);
          if (close === -1) giveUp();
          this.comments.push({ start, end: close + 2, text: text.slice(start + 2, close) });
          this.pos = close + 2;
          continue;
        }
        giveUp();
      }
      return;
    }
  }
}

const NUMBER = /-?(?:0|[1-9][0-9]*)(?:\.[0-9]+)?(?:[eE][-+]?[0-9]+)?/y;
