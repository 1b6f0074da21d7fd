/**
 * TOML text -> one located document, via toml-eslint-parser (an AST with source ranges).
 *
 * The located tree is the one YAML and JSON give: the root table is a block map, a `[table]`
 * header or a dotted key (`scheduler.beta_schedule = ...`) opens nested block maps, `[[array]]`
 * headers make a block list of maps, inline tables and arrays are flow collections. Every entry's
 * `keySpan` is its own key segment; `tomlKey` (on entries written by a key/value line) tells where
 * the whole dotted key starts and whether the entry sits in an inline table, which the fix
 * renderer needs to write a sibling.
 *
 * The parser recurses once per nesting level of a value, so an iterative scan first finds the
 * values nested deeper than the limit and blanks them (same length, line breaks kept) before the
 * parse. TOML has no partial reading: a syntax error gives one problem and no tree, as TOML
 * loaders refuse the whole file.
 */
import { parseTOML, type AST } from 'toml-eslint-parser';
import type { LocatedEntry, LocatedList, LocatedMap, LocatedNode, LocatedScalar, ParsedDocument, ParseLimits, ParseProblem, Span } from './types';
import { blankRegions, firstLine, placeholderFor, tooDeepProblem, tooLongProblem, type Cut, type SourceComment } from './shared';

export interface TomlReadResult {
  documents: ParsedDocument[];
  problems: ParseProblem[];
  comments: SourceComment[];
}

export function readToml(text: string, limits: ParseLimits, bom: boolean): TomlReadResult {
  const problems: ParseProblem[] = [];
  // The parser does not take U+FEFF as white space: a space of the same length keeps every offset.
  const source = bom ? ` ${text.slice(1)}` : text;
  // A value at the top level is already one level below the root table.
  const scan = scanToml(source, Math.max(1, limits.maxNesting - 1));
  for (const cut of scan.cuts) problems.push(tooDeepProblem(cut, limits.maxNesting));
  let ast: AST.TOMLProgram;
  try {
    // TOML v1.0.0: what the Python loaders of training scripts read (tomllib; recalled from
    // memory). 1.1 additions (trailing commas and line breaks in inline tables) are errors there.
    ast = parseTOML(blankRegions(source, scan.cuts, '0'), { tomlVersion: '1.0.0' });
  } catch (e) {
    problems.push(syntaxProblem(e, text.length));
    return { documents: [{ index: 0, root: null, span: { start: 0, end: text.length } }], problems, comments: scan.comments };
  }
  const comments: SourceComment[] = ast.comments.map((c) => ({ start: c.range[0], end: c.range[1], text: c.value }));
  const builder = new TreeBuilder(text, limits, new Map(scan.cuts.map((c) => [c.start, c])), problems);
  const root = builder.build(ast);
  return { documents: [{ index: 0, root, span: { start: 0, end: text.length } }], problems, comments };
}

function syntaxProblem(e: unknown, length: number): ParseProblem {
  const err = e as { index?: unknown; message?: unknown };
  const at = typeof err?.index === 'number' && Number.isFinite(err.index) ? Math.max(0, Math.min(err.index, length)) : 0;
  const message = typeof err?.message === 'string' ? firstLine(err.message) : 'The text is not valid TOML.';
  if (e instanceof RangeError) {
    return { code: 'internal-error', severity: 'error', span: { start: 0, end: 0 }, message: `The file could not be read: ${message}` };
  }
  return {
    code: 'toml-syntax',
    severity: 'error',
    span: { start: at, end: Math.min(at + 1, length) },
    message: message.endsWith('.') ? message : `${message}.`,
  };
}

/**
 * Comments, and value regions nested deeper than `maxNesting`, found without recursion. Strings
 * are skipped (a `#` or bracket inside one is text); header brackets (`[table]`, `[[list]]`) are
 * not nesting.
 */
export function scanToml(text: string, maxNesting: number): { comments: SourceComment[]; cuts: Cut[] } {
  const comments: SourceComment[] = [];
  const cuts: Cut[] = [];
  const n = text.length;
  let depth = 0;
  let inValue = false;
  let cutStart = -1;
  let cutDepth = 0;
  let i = 0;
  while (i < n) {
    const c = text[i];
    if (c === '#') {
      let end = text.indexOf('\n', i);
      if (end < 0) end = n;
      else if (text[end - 1] === '\r') end--;
      comments.push({ start: i, end, text: text.slice(i + 1, end) });
      i = end;
      continue;
    }
    if (c === '"' || c === "'") {
      i = skipString(text, i);
      continue;
    }
    if (c === '\n') {
      if (depth === 0) inValue = false;
    } else if (c === '=') {
      if (depth === 0) inValue = true;
    } else if ((c === '[' || c === '{') && (inValue || depth > 0)) {
      depth++;
      if (depth > maxNesting && cutStart < 0) {
        cutStart = i;
        cutDepth = depth;
      }
    } else if ((c === ']' || c === '}') && depth > 0) {
      if (cutStart >= 0 && depth === cutDepth) {
        cuts.push({ start: cutStart, end: i + 1 });
        cutStart = -1;
      }
      depth--;
    }
    i++;
  }
  if (cutStart >= 0) cuts.push({ start: cutStart, end: n });
  return { comments, cuts };
}

/** Offset just past the string that starts at `at` (basic, literal, or their multi-line forms). */
function skipString(text: string, at: number): number {
  const q = text[at]!;
  const n = text.length;
  if (text.startsWith(q + q + q, at)) {
    let i = at + 3;
    while (i < n) {
      if (q === '"' && text[i] === '\\') {
        i += 2;
        continue;
      }
      if (text.startsWith(q + q + q, i)) {
        // Up to two quotes may stand right before the closing three.
        let end = i + 3;
        while (end < n && text[end] === q && end < i + 5) end++;
        return end;
      }
      i++;
    }
    return n;
  }
  let i = at + 1;
  while (i < n) {
    const c = text[i];
    if (c === '\n') return i;
    if (q === '"' && c === '\\') {
      i += 2;
      continue;
    }
    if (c === q) return i + 1;
    i++;
  }
  return n;
}

type KeyPart = AST.TOMLBare | AST.TOMLQuoted;

class TreeBuilder {
  /** Key -> entry of every map built here (TOML keys are unique per table). */
  private readonly index = new WeakMap<LocatedMap, Map<string, LocatedEntry>>();

  constructor(
    private readonly text: string,
    private readonly limits: ParseLimits,
    private readonly cutStarts: Map<number, Cut>,
    private readonly problems: ParseProblem[],
  ) {}

  build(ast: AST.TOMLProgram): LocatedMap {
    const root = this.newMap('block', { start: 0, end: this.text.length });
    const top = ast.body[0];
    if (!top) return root;
    for (const item of top.body) {
      if (item.type === 'TOMLKeyValue') this.addKeyValue(root, item, 1, false);
      else this.addTable(root, item);
    }
    return root;
  }

  private newMap(style: 'block' | 'flow', span: Span): LocatedMap {
    const map: LocatedMap = { kind: 'map', entries: [], style, span: { ...span } };
    this.index.set(map, new Map());
    return map;
  }

  private add(map: LocatedMap, entry: LocatedEntry): void {
    map.entries.push(entry);
    this.index.get(map)?.set(entry.key, entry);
    if (map.style === 'block' && map.span.end < entry.span.end) map.span.end = entry.span.end;
  }

  private keyName(part: KeyPart): string {
    return part.type === 'TOMLBare' ? part.name : part.value;
  }

  private spanOf(node: { range: [number, number] }): Span {
    return { start: node.range[0], end: node.range[1] };
  }

  /**
   * The map reached through `parts` from `map`, making the tables that do not exist yet. A key
   * that holds a list of tables leads into its last table (what a later header extends). Null when
   * a key holds a value instead, or the path is deeper than the nesting limit.
   */
  private descend(map: LocatedMap, parts: readonly KeyPart[], depth: number, start: number, end: number): LocatedMap | null {
    let current = map;
    for (let i = 0; i < parts.length; i++) {
      if (depth + i > this.limits.maxNesting) {
        this.problems.push(tooDeepProblem({ start, end }, this.limits.maxNesting));
        return null;
      }
      const part = parts[i]!;
      const name = this.keyName(part);
      let entry = this.index.get(current)?.get(name);
      if (!entry) {
        const value = this.newMap(current.style, { start, end });
        entry = { key: name, keySpan: this.spanOf(part), value, span: { start, end } };
        this.add(current, entry);
      }
      const value = entry.value;
      if (value?.kind === 'map') current = value;
      else if (value?.kind === 'list' && value.items.length > 0 && value.items[value.items.length - 1]!.kind === 'map') {
        current = value.items[value.items.length - 1] as LocatedMap;
      } else return null;
      if (current.style === 'block' && current.span.end < end) current.span.end = end;
    }
    return current;
  }

  private addTable(root: LocatedMap, table: AST.TOMLTable): void {
    const parts = table.key.keys;
    const last = parts[parts.length - 1];
    if (!last) return;
    const span = this.spanOf(table);
    const parent = this.descend(root, parts.slice(0, -1), 1, span.start, span.end);
    if (!parent) return;
    const name = this.keyName(last);
    let entry = this.index.get(parent)?.get(name);
    let target: LocatedMap;
    if (table.kind === 'array') {
      target = this.newMap('block', span);
      if (entry?.value?.kind === 'list') {
        entry.value.items.push(target);
        entry.value.span.end = Math.max(entry.value.span.end, span.end);
        entry.span.end = Math.max(entry.span.end, span.end);
      } else if (!entry) {
        const list: LocatedList = { kind: 'list', items: [target], style: 'block', span: { ...span } };
        entry = { key: name, keySpan: this.spanOf(last), value: list, span: { ...span } };
        this.add(parent, entry);
      } else return;
    } else {
      if (entry?.value?.kind === 'map') {
        // Made implicitly by an earlier `[a.b]` header: this header now opens it.
        target = entry.value;
        target.span.start = Math.min(target.span.start, span.start);
        target.span.end = Math.max(target.span.end, span.end);
        entry.keySpan = this.spanOf(last);
      } else if (!entry) {
        target = this.newMap('block', span);
        entry = { key: name, keySpan: this.spanOf(last), value: target, span: { ...span } };
        this.add(parent, entry);
      } else return;
    }
    entry.span.end = Math.max(entry.span.end, span.end);
    const depth = parts.length + 1;
    for (const kv of table.body) this.addKeyValue(target, kv, depth, false);
  }

  private addKeyValue(map: LocatedMap, kv: AST.TOMLKeyValue, depth: number, inline: boolean): void {
    const parts = kv.key.keys;
    const last = parts[parts.length - 1];
    if (!last) return;
    const span = this.spanOf(kv);
    const parent = this.descend(map, parts.slice(0, -1), depth, span.start, span.end);
    if (!parent) return;
    const value = this.convert(kv.value, depth + parts.length);
    const entry: LocatedEntry = { key: this.keyName(last), keySpan: this.spanOf(last), value, span, tomlKey: { start: kv.key.range[0], inline } };
    this.add(parent, entry);
  }

  private convert(node: AST.TOMLContentNode, depth: number): LocatedNode {
    const span = this.spanOf(node);
    const cut = this.cutStarts.get(span.start);
    if (cut) return placeholderFor(this.text, cut);
    if (depth > this.limits.maxNesting && node.type !== 'TOMLValue') {
      // The scan reported a cut inside already when there is one.
      if (![...this.cutStarts.values()].some((c) => c.start >= span.start && c.end <= span.end))
        this.problems.push(tooDeepProblem(span, this.limits.maxNesting));
      return placeholderFor(this.text, span);
    }
    if (node.type === 'TOMLArray') {
      const count = Math.min(node.elements.length, this.limits.maxListLength);
      const items: LocatedNode[] = [];
      for (let i = 0; i < count; i++) items.push(this.convert(node.elements[i]!, depth + 1));
      if (node.elements.length > count) {
        this.problems.push(tooLongProblem({ start: node.elements[count]!.range[0], end: span.end }, node.elements.length, this.limits.maxListLength));
      }
      return { kind: 'list', items, style: 'flow', span };
    }
    if (node.type === 'TOMLInlineTable') {
      const map = this.newMap('flow', span);
      for (const kv of node.body) this.addKeyValue(map, kv, depth + 1, true);
      return map;
    }
    return this.scalar(node, span);
  }

  private scalar(node: AST.TOMLValue, span: Span): LocatedScalar {
    const raw = this.text.slice(span.start, span.end);
    switch (node.kind) {
      case 'string': {
        const style = node.multiline ? 'block' : node.style === 'literal' ? 'single' : 'double';
        return { kind: 'scalar', value: node.value, raw, style, span };
      }
      case 'integer':
      case 'float':
        return { kind: 'scalar', value: Number(node.value), raw, style: 'plain', span };
      case 'boolean':
        return { kind: 'scalar', value: node.value, raw, style: 'plain', span };
      default:
        // Dates and times: their text (no concept takes one).
        return { kind: 'scalar', value: raw, raw, style: 'plain', span };
    }
  }
}
