/**
 * YAML text -> located documents.
 *
 * Two passes over the `yaml` library: its CST parser (iterative, safe at any depth) finds comments
 * and regions nested deeper than the limit; those regions are blanked (same length, line breaks
 * kept) before the library's composer, which recurses per level, builds the documents. The
 * composed nodes are then copied into our located tree with their ranges.
 */
import { Composer, Parser, isAlias, isMap, isPair, isScalar, isSeq } from 'yaml';
import type { Node as YamlNode, Scalar, ScalarTag, YAMLMap, YAMLSeq } from 'yaml';
import type {
  LocatedEntry,
  LocatedList,
  LocatedMap,
  LocatedNode,
  LocatedScalar,
  ParsedDocument,
  ParseLimits,
  ParseProblem,
  ScalarValue,
  Span,
} from './types';
import {
  blankRegions,
  dropDuplicateKeys,
  firstLine,
  placeholderFor,
  shorten,
  tooDeepProblem,
  tooLongProblem,
  type Cut,
  type SourceComment,
} from './shared';
import { coreScalar, resolveCorePlain, type ScalarInterpreter } from './scalars';
import { scanCst, flatString } from './yamlCst';

export interface YamlReadResult {
  documents: ParsedDocument[];
  problems: ParseProblem[];
  comments: SourceComment[];
}

const CORE_TAGS = new Set(['str', 'int', 'float', 'bool', 'null', 'map', 'seq'].map((t) => `tag:yaml.org,2002:${t}`));

export function readYaml(text: string, limits: ParseLimits, interpret: ScalarInterpreter = coreScalar): YamlReadResult {
  const problems: ParseProblem[] = [];
  // YAML 1.2 counts a lone CR as a line break; the library does not. The same text with each lone
  // CR as LF has the same length, so every offset the library reports holds for the original.
  const source = withLoneCrAsLf(text);
  const tokens = Array.from(new Parser().parse(source));
  const { comments, cuts } = scanCst(tokens, limits.maxNesting);
  for (const cut of cuts) problems.push(tooDeepProblem(cut, limits.maxNesting));

  const composeTokens = cuts.length === 0 ? tokens : Array.from(new Parser().parse(blankRegions(source, cuts, '~')));
  const composer = new Composer({
    prettyErrors: false,
    uniqueKeys: false,
    merge: false,
    intAsBigInt: false,
    keepSourceTokens: false,
    customTags: (tags) => [...EXPLICIT_CORE_TAGS, ...tags],
  });
  const docs = Array.from(composer.compose(composeTokens, false, text.length));
  if (docs.length === 0) {
    const info = composer.streamInfo();
    for (const e of info.errors) problems.push(libProblem(e, 'error', text));
    for (const w of info.warnings) problems.push(libProblem(w, 'warning', text));
  }

  const cutStarts = new Map(cuts.map((c) => [c.start, c]));
  const documents = docs.map((doc, index) => {
    for (const e of doc.errors) problems.push(libProblem(e, 'error', text));
    for (const w of doc.warnings) problems.push(libProblem(w, 'warning', text));
    const converter = new DocumentConverter(text, limits, cutStarts, problems, interpret);
    const contents = doc.contents as YamlNode | null;
    const root = contents && !isEmptyScalar(contents) ? converter.convertRoot(contents) : null;
    const [start, , end] = doc.range;
    return { index, root, span: { start, end } } satisfies ParsedDocument;
  });
  return { documents, problems, comments };
}

/** `text` with every CR that is not followed by LF replaced by LF (same length). */
export function withLoneCrAsLf(text: string): string {
  return text.includes('\r') ? text.replace(/\r(?!\n)/g, '\n') : text;
}

const CORE_TAG_MISMATCH = 'core-tag: ';

/**
 * The core schema's own tags, when written explicitly (`!!float 1`, `!!int "12"`), apply to the
 * scalar's text as YAML 1.2 section 10.3 resolves it; the library's versions refuse some valid
 * spellings (`!!float 1`). A text that does not fit the tag keeps its string value with a
 * `tag-mismatch` warning. These tags have no `test`, so untagged scalars never reach them.
 */
const EXPLICIT_CORE_TAGS: ScalarTag[] = (
  [
    [
      'int',
      (s: string) =>
        typeof resolveCorePlain(s) === 'number' && /^[-+]?(0o[0-7]+|0x[0-9a-fA-F]+|[0-9]+)$/.test(s.trim()) ? resolveCorePlain(s) : undefined,
    ],
    ['float', (s: string) => (typeof resolveCorePlain(s) === 'number' ? resolveCorePlain(s) : undefined)],
    ['bool', (s: string) => (typeof resolveCorePlain(s) === 'boolean' ? resolveCorePlain(s) : undefined)],
    ['null', (s: string) => (resolveCorePlain(s) === null ? null : undefined)],
  ] as const
).map(([name, apply]) => ({
  tag: `tag:yaml.org,2002:${name}`,
  default: false,
  resolve(str: string, onError: (message: string) => void) {
    const value = apply(str);
    if (value !== undefined) return value;
    onError(`${CORE_TAG_MISMATCH}${shorten(JSON.stringify(str), 60)} is not a valid !!${name} value; it is read as a string.`);
    return str;
  },
}));

/** A value that is not written at all (`key:`, an empty document), as opposed to `~` or `null`. */
function isEmptyScalar(n: YamlNode): boolean {
  return isScalar(n) && n.value === null && !!n.range && n.range[0] === n.range[1] && !n.tag;
}

interface LibError {
  code: string;
  message: string;
  pos: [number, number];
}

function libProblem(e: LibError, severity: 'error' | 'warning', text: string): ParseProblem {
  const span = { start: e.pos[0], end: Math.max(e.pos[0], e.pos[1]) };
  if (e.code === 'TAG_RESOLVE_FAILED' && e.message.startsWith(CORE_TAG_MISMATCH)) {
    return { code: 'tag-mismatch', severity: 'warning', span, message: shorten(e.message.slice(CORE_TAG_MISMATCH.length), 200) };
  }
  if (e.code === 'TAG_RESOLVE_FAILED') {
    const tag = text.slice(span.start, span.end).split(/\s/, 1)[0] || 'tag';
    return {
      code: 'custom-tag',
      severity: 'warning',
      span,
      message: `Custom tag ${shorten(tag, 80)} is not applied; the value is read as plain data.`,
    };
  }
  if (e.code === 'RESOURCE_EXHAUSTION') {
    return { code: 'too-deep', severity: 'warning', span, message: `YAML nesting too deep to read: ${firstLine(e.message)}` };
  }
  return {
    code: severity === 'error' ? 'yaml-syntax' : 'yaml-warning',
    severity,
    span,
    message: firstLine(e.message),
  };
}

interface NodeStats {
  /** Collection levels at and below this node (a scalar is 0). */
  height: number;
  /** Nodes in the subtree, counting alias targets in full. */
  nodes: number;
  /** Alias expansions in the subtree, counting nested ones in full. */
  aliases: number;
}

interface Converted {
  node: LocatedNode;
  stats: NodeStats;
}

const SCALAR_STATS: NodeStats = { height: 0, nodes: 1, aliases: 0 };

class DocumentConverter {
  private readonly memo = new Map<YamlNode, Converted>();
  private readonly inProgress = new Set<YamlNode>();
  private readonly anchors = new Map<string, { start: number; node: YamlNode }[]>();
  private aliasExpansions = 0;
  private aliasNodes = 0;
  private readonly aliasNodeBudget: number;
  private aliasLimitProblem: ParseProblem | null = null;
  private skippedAliases = 0;

  constructor(
    private readonly text: string,
    private readonly limits: ParseLimits,
    private readonly cutStarts: Map<number, Cut>,
    private readonly problems: ParseProblem[],
    private readonly interpret: ScalarInterpreter,
  ) {
    this.aliasNodeBudget = Math.max(1, limits.maxAliasCount) * 1000;
  }

  convertRoot(node: YamlNode): LocatedNode | null {
    this.indexAnchors(node);
    const result = this.convert(node, 0).node;
    if (this.aliasLimitProblem && this.skippedAliases > 1) {
      this.aliasLimitProblem.message += ` (${this.skippedAliases} aliases not expanded)`;
    }
    return result;
  }

  /** Anchors by name with the offset of their node, for "last anchor before the alias" lookup. */
  private indexAnchors(root: YamlNode): void {
    const stack: unknown[] = [root];
    while (stack.length > 0) {
      const n = stack.pop();
      if (isPair(n)) {
        stack.push(n.key, n.value);
        continue;
      }
      if (!n || typeof n !== 'object' || !('range' in n)) continue;
      const node = n as YamlNode;
      if (node.anchor && node.range) {
        const list = this.anchors.get(node.anchor) ?? [];
        list.push({ start: node.range[0], node });
        this.anchors.set(node.anchor, list);
      }
      // A loop, not push(...): a list can have more items than a call has arguments.
      if (isMap(node) || isSeq(node)) for (const item of node.items as unknown[]) stack.push(item);
    }
    for (const list of this.anchors.values()) list.sort((a, b) => a.start - b.start);
  }

  private spanOf(node: { range?: [number, number, number] | null }): Span {
    const r = node.range;
    if (!r) return { start: 0, end: 0 };
    return { start: r[0], end: Math.max(r[0], r[1]) };
  }

  private convert(node: YamlNode, depth: number): Converted {
    const done = this.memo.get(node);
    if (done) return done;
    let result: Converted;
    if (isAlias(node)) {
      result = this.convertAlias(node, depth);
      return result; // aliases are not memoised: each occurrence is budgeted
    }
    this.inProgress.add(node);
    try {
      if (isMap(node)) result = this.convertMap(node, depth);
      else if (isSeq(node)) result = this.convertSeq(node, depth);
      else result = { node: this.convertScalar(node), stats: SCALAR_STATS };
    } finally {
      this.inProgress.delete(node);
    }
    this.memo.set(node, result);
    return result;
  }

  private convertScalar(node: Scalar): LocatedScalar {
    let span = this.spanOf(node);
    const cut = this.cutStarts.get(span.start);
    if (cut) return placeholderFor(this.text, cut);
    let value: ScalarValue;
    const style = scalarStyle(node.type);
    if (style === 'block') {
      // Keep the trailing line break out of the span (entries end at the value's last character).
      let end = span.end;
      while (end > span.start && /[\r\n \t]/.test(this.text[end - 1]!)) end--;
      span = { start: span.start, end };
    }
    value = this.scalarValue(node, span);
    // The yaml library builds quoted strings piece by piece: a V8 rope that costs ~30 bytes per
    // character until something flattens it. Flatten long ones here (a 1 MB string kept 32 MB).
    if (typeof value === 'string' && value.length > 1024) value = flatString(value);
    return { kind: 'scalar', value, raw: this.text.slice(span.start, span.end), style, span };
  }

  /** The scalar's value: through the interpreter, unless an explicit core tag decides the type. */
  private scalarValue(node: Scalar, span: Span = this.spanOf(node)): ScalarValue {
    const tag = node.tag;
    if (tag && CORE_TAGS.has(tag)) return toScalarValue(node.value);
    // A custom tag is never applied: the text is read as an untagged scalar would be.
    const style = scalarStyle(node.type);
    const decoded = style === 'plain' && typeof node.source === 'string' ? node.source : String(toScalarValue(node.value));
    return this.interpret({ source: this.text.slice(span.start, span.end), style, decoded, ...(tag ? { tag } : {}) });
  }

  private convertMap(node: YAMLMap, depth: number): Converted {
    const span = this.spanOf(node);
    if (depth + 1 > this.limits.maxNesting) return this.tooDeep(span);
    const entries: LocatedEntry[] = [];
    let height = 1;
    let nodes = 1;
    let aliases = 0;
    for (const pair of node.items) {
      const keyNode = pair.key as YamlNode | null;
      const { key, keySpan } = this.keyOf(keyNode, pair.value as YamlNode | null, span);
      let value: LocatedNode | null = null;
      const v = pair.value as YamlNode | null;
      if (v && !isEmptyScalar(v)) {
        const c = this.convert(v, depth + 1);
        value = c.node;
        height = Math.max(height, 1 + c.stats.height);
        nodes += c.stats.nodes;
        aliases += c.stats.aliases;
      }
      // An alias value shares its anchor's node (and span); the entry still ends at the alias.
      const end = value ? (isAlias(v) && v?.range ? v.range[1] : value.span.end) : this.afterColon(keySpan.end);
      const entry: LocatedEntry = { key, keySpan, value, span: { start: keySpan.start, end: Math.max(end, keySpan.end) } };
      if (value && isAlias(v) && v.range) entry.aliasSpan = { start: v.range[0], end: v.range[1] };
      entries.push(entry);
    }
    const located: LocatedMap = {
      kind: 'map',
      entries: dropDuplicateKeys(entries, this.problems),
      style: node.flow ? 'flow' : 'block',
      span: node.flow ? span : trimBlockSpan(span, entries),
    };
    return { node: located, stats: { height, nodes, aliases } };
  }

  private convertSeq(node: YAMLSeq, depth: number): Converted {
    const span = this.spanOf(node);
    if (depth + 1 > this.limits.maxNesting) return this.tooDeep(span);
    const items: LocatedNode[] = [];
    let height = 1;
    let nodes = 1;
    let aliases = 0;
    const all = node.items as YamlNode[];
    const count = Math.min(all.length, this.limits.maxListLength);
    for (let i = 0; i < count; i++) {
      const item = all[i];
      if (!item) {
        items.push({ kind: 'scalar', value: null, raw: '', style: 'plain', span: { start: span.start, end: span.start } });
        continue;
      }
      const c = this.convert(item, depth + 1);
      items.push(c.node);
      height = Math.max(height, 1 + c.stats.height);
      nodes += c.stats.nodes;
      aliases += c.stats.aliases;
    }
    if (all.length > count) {
      const first = all[count];
      const from = first?.range ? first.range[0] : span.start;
      this.problems.push(tooLongProblem({ start: from, end: span.end }, all.length, this.limits.maxListLength));
    }
    const located: LocatedList = {
      kind: 'list',
      items,
      style: node.flow ? 'flow' : 'block',
      span: node.flow ? span : trimBlockSpan(span, items),
    };
    return { node: located, stats: { height, nodes, aliases } };
  }

  private keyOf(keyNode: YamlNode | null, valueNode: YamlNode | null, mapSpan: Span): { key: string; keySpan: Span } {
    if (!keyNode) {
      const at = valueNode?.range?.[0] ?? mapSpan.start;
      return { key: '', keySpan: { start: at, end: at } };
    }
    let target: YamlNode | undefined = keyNode;
    if (isAlias(keyNode)) target = this.lookupAnchor(keyNode.source, keyNode.range?.[0] ?? 0);
    const keySpan = this.spanOf(keyNode);
    if (target && isScalar(target)) return { key: keyText(this.scalarValue(target)), keySpan };
    return { key: shorten(this.text.slice(keySpan.start, keySpan.end), 200), keySpan };
  }

  /** End of `key:` when there is no value: past the colon if it follows the key. */
  private afterColon(keyEnd: number): number {
    let i = keyEnd;
    while (i < this.text.length && (this.text[i] === ' ' || this.text[i] === '\t')) i++;
    return this.text[i] === ':' ? i + 1 : keyEnd;
  }

  private lookupAnchor(name: string, before: number): YamlNode | undefined {
    const list = this.anchors.get(name);
    if (!list) return undefined;
    let found: YamlNode | undefined;
    for (const a of list) {
      if (a.start < before) found = a.node;
      else break;
    }
    return found;
  }

  private convertAlias(node: YamlNode & { source: string }, depth: number): Converted {
    const span = this.spanOf(node);
    const target = this.lookupAnchor(node.source, span.start);
    const empty = (): Converted => ({ node: placeholderFor(this.text, span), stats: SCALAR_STATS });
    if (!target) {
      this.problems.push({
        code: 'yaml-syntax',
        severity: 'error',
        span,
        message: `Alias *${shorten(node.source, 60)} has no anchor &${shorten(node.source, 60)} before it.`,
      });
      return empty();
    }
    if (this.inProgress.has(target)) {
      this.problems.push({
        code: 'alias-cycle',
        severity: 'error',
        span,
        message: `Alias *${shorten(node.source, 60)} refers to a node that contains it; read as an empty value.`,
      });
      return empty();
    }
    const c = this.convert(target, depth);
    if (depth + c.stats.height > this.limits.maxNesting) {
      this.problems.push(tooDeepProblem(span, this.limits.maxNesting));
      return empty();
    }
    const expansions = this.aliasExpansions + 1 + c.stats.aliases;
    const nodes = this.aliasNodes + c.stats.nodes;
    if (expansions > this.limits.maxAliasCount || nodes > this.aliasNodeBudget) {
      this.skippedAliases++;
      if (!this.aliasLimitProblem) {
        this.aliasLimitProblem = {
          code: 'alias-limit',
          severity: 'warning',
          span,
          message:
            `YAML aliases expand beyond the limit (${this.limits.maxAliasCount} expansions or ` +
            `${this.aliasNodeBudget} nodes); this alias and later ones are read as empty values.`,
        };
        this.problems.push(this.aliasLimitProblem);
      }
      return empty();
    }
    this.aliasExpansions = expansions;
    this.aliasNodes = nodes;
    return { node: c.node, stats: { height: c.stats.height, nodes: c.stats.nodes, aliases: 1 + c.stats.aliases } };
  }

  private tooDeep(span: Span): Converted {
    this.problems.push(tooDeepProblem(span, this.limits.maxNesting));
    return { node: placeholderFor(this.text, span), stats: SCALAR_STATS };
  }
}

/** A block collection ends with its last item, not with the comments and blank lines after it. */
function trimBlockSpan(span: Span, items: { span: Span }[]): Span {
  const last = items[items.length - 1];
  if (!last) return span;
  return { start: span.start, end: Math.max(span.start, Math.min(span.end, last.span.end)) };
}

function scalarStyle(type: Scalar.Type | undefined): LocatedScalar['style'] {
  switch (type) {
    case 'QUOTE_SINGLE':
      return 'single';
    case 'QUOTE_DOUBLE':
      return 'double';
    case 'BLOCK_FOLDED':
    case 'BLOCK_LITERAL':
      return 'block';
    default:
      return 'plain';
  }
}

/** A mapping key's text: the scalar's value as a string (`1: x` has the key "1"). */
export function keyText(v: ScalarValue): string {
  return typeof v === 'string' ? v : String(v);
}

function toScalarValue(v: unknown): ScalarValue {
  if (v === null || v === undefined) return null;
  if (typeof v === 'string' || typeof v === 'number' || typeof v === 'boolean') return v;
  if (typeof v === 'bigint') return Number(v);
  if (v instanceof Date) return v.toISOString();
  return String(v);
}

export { resolveCorePlain } from './scalars';
