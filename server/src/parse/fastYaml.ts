/**
 * The fast YAML reader: js-yaml's event parser (a flat stream of events that point into the text
 * by offsets) turned into the located tree in one pass, with every scalar handed to the scalar
 * interpreter as raw text.
 *
 * It reads the common shape of a config (one document of block and flow maps, lists and plain or
 * quoted scalars) and gives up, returning null, on anything rarer: a parse error, anchors,
 * aliases, tags, merge keys, several documents or explicit document markers, directives, a BOM,
 * block scalars, tabs, lone CR line ends, empty list items or keys, collection keys, lists longer
 * than the limit or nesting deeper than it, texts over 512 KiB with more commas and dashes than
 * the list limit. The caller then reads the text with the exact reader
 * (yaml.ts), so the result is always the one that reader would give; a differential test keeps the
 * two identical (test/parse/fastParse.test.ts).
 */
import { getScalarValue, parseEvents, type Event, type ScalarEvent } from 'js-yaml';
import { keyText } from './yaml';
import type { YamlReadResult } from './yaml';
import { dropDuplicateKeys, type SourceComment } from './shared';
import type { RawScalar, ScalarInterpreter } from './scalars';
import type { LocatedEntry, LocatedList, LocatedMap, LocatedNode, LocatedScalar, ParseLimits, ParseProblem, Span } from './types';

// js-yaml's event and style ids (EVENT_ID, SCALAR_STYLE, COLLECTION_STYLE).
const DOCUMENT = 1;
const SEQUENCE = 2;
const MAPPING = 3;
const SCALAR = 4;
const POP = 6;
const PLAIN = 1;
const SINGLE = 2;
const DOUBLE = 3;
const FLOW = 2;

/** Longest implicit key the exact reader accepts without an error (YAML's 1024-character rule). */
const MAX_KEY_LENGTH = 1000;

/**
 * Above this length a text goes to the fast reader only when it cannot hold a list past the limit:
 * js-yaml would make an event for every item before the reader gives up on the list, and the
 * exact reader would then parse the text again. Below it, that cost is small.
 */
const LIST_CHECK_LENGTH = 512 * 1024;

/** Why the fast reader gave up (for tests and profiles); the caller only needs null. */
class Unsupported extends Error {}

interface MapFrame {
  kind: 'map';
  node: LocatedMap;
  /** The key read last, waiting for its value. */
  key: LocatedScalar | null;
}
interface ListFrame {
  kind: 'list';
  node: LocatedList;
}

export function readYamlFast(text: string, limits: ParseLimits, interpret: ScalarInterpreter): YamlReadResult | null {
  if (!quickEligible(text, limits)) return null;
  let events: Event[];
  try {
    // One level of slack: js-yaml counts the document's root collection as depth 1, as we do.
    // The events are this reader's alone: build() empties the list as it goes.
    events = parseEvents(text, { maxDepth: limits.maxNesting });
  } catch {
    return null;
  }
  try {
    return build(text, events, limits, interpret);
  } catch (e) {
    if (e instanceof Unsupported) return null;
    throw e;
  }
}

/** More than the items of every list in the text: each item but a flow list's first follows a comma or starts with "-". */
function listItemsAtMost(text: string): number {
  let n = 1;
  for (let i = text.indexOf(','); i !== -1; i = text.indexOf(',', i + 1)) n++;
  for (let i = text.indexOf('-'); i !== -1; i = text.indexOf('-', i + 1)) n++;
  // Each "[" may open a list whose first item follows no comma.
  for (let i = text.indexOf('['); i !== -1; i = text.indexOf('[', i + 1)) n++;
  return n;
}

/** Cheap text checks for features the fast reader leaves to the exact one. */
function quickEligible(text: string, limits: ParseLimits): boolean {
  if (text.length === 0 || text.charCodeAt(0) === 0xfeff) return false;
  if (text.length > LIST_CHECK_LENGTH && listItemsAtMost(text) > limits.maxListLength) return false;
  if (text.indexOf('\t') !== -1) return false;
  for (let i = text.indexOf('\r'); i !== -1; i = text.indexOf('\r', i + 1)) {
    if (text.charCodeAt(i + 1) !== 10) return false;
  }
  return true;
}

function build(text: string, events: Event[], limits: ParseLimits, interpret: ScalarInterpreter): YamlReadResult {
  const problems: ParseProblem[] = [];
  const scalarSpans: Span[] = [];
  const stack: (MapFrame | ListFrame)[] = [];
  let root: LocatedNode | null = null;
  let documents = 0;
  let rootSet = false;

  const attach = (node: LocatedNode | null, empty: boolean) => {
    const top = stack[stack.length - 1];
    if (!top) {
      if (rootSet) throw new Unsupported('two roots');
      root = empty ? null : node;
      rootSet = true;
      return;
    }
    if (top.kind === 'list') {
      if (empty || !node) throw new Unsupported('empty list item');
      if (top.node.items.length >= limits.maxListLength) throw new Unsupported('long list');
      top.node.items.push(node);
      return;
    }
    if (top.key === null) {
      if (empty || !node || node.kind !== 'scalar') throw new Unsupported('key');
      if (node.style === 'plain' && node.raw === '<<') throw new Unsupported('merge key');
      if (node.span.end - node.span.start > MAX_KEY_LENGTH) throw new Unsupported('long key');
      top.key = node;
      return;
    }
    const keyNode = top.key;
    top.key = null;
    const keySpan = keyNode.span;
    const value = empty ? null : node;
    const end = value ? value.span.end : afterColon(text, keySpan.end);
    const entry: LocatedEntry = {
      key: keyText(keyNode.value),
      keySpan,
      value,
      span: { start: keySpan.start, end: Math.max(end, keySpan.end) },
    };
    top.node.entries.push(entry);
  };

  // Each event is let go once read, so the tree grows while the events shrink.
  const pending = events as (Event | undefined)[];
  for (let i = 0; i < pending.length; i++) {
    const e = pending[i]!;
    pending[i] = undefined;
    switch (e.type) {
      case DOCUMENT:
        if (++documents > 1 || e.explicitStart || e.explicitEnd || e.directives.length > 0) throw new Unsupported('document markers');
        break;
      case SCALAR: {
        if (e.anchorStart !== -1 || e.tagStart !== -1) throw new Unsupported('anchor or tag');
        if (e.valueStart === -1) {
          attach(null, true);
          break;
        }
        const node = scalarNode(text, e, interpret);
        scalarSpans.push(node.span);
        attach(node, false);
        break;
      }
      case MAPPING:
      case SEQUENCE: {
        if (e.anchorStart !== -1 || e.tagStart !== -1) throw new Unsupported('anchor or tag');
        const style = e.style === FLOW ? 'flow' : 'block';
        const span = { start: e.start, end: e.start };
        if (e.type === MAPPING) stack.push({ kind: 'map', node: { kind: 'map', entries: [], style, span }, key: null });
        else stack.push({ kind: 'list', node: { kind: 'list', items: [], style, span } });
        break;
      }
      case POP: {
        const top = stack.pop();
        if (!top) break; // the document's own end
        if (top.kind === 'map' && top.key !== null) throw new Unsupported('key without value');
        const node = top.node;
        const children: { span: Span }[] = node.kind === 'map' ? node.entries : node.items;
        const last = children[children.length - 1];
        if (node.style === 'flow') node.span.end = closingBracket(text, last ? last.span.end : node.span.start + 1);
        else {
          if (!last) throw new Unsupported('empty block collection');
          node.span.end = last.span.end;
        }
        if (node.kind === 'map') node.entries = dropDuplicateKeys(node.entries, problems);
        attach(node, false);
        break;
      }
      default:
        // Aliases.
        throw new Unsupported('alias');
    }
  }
  const rootNode = root as LocatedNode | null;
  if (documents !== 1 || stack.length > 0 || !rootNode) throw new Unsupported('no document');
  const comments = findComments(text, scalarSpans);
  // A document starts at its content (leading comments are outside it) and ends with the text.
  return { documents: [{ index: 0, root: rootNode, span: { start: rootNode.span.start, end: text.length } }], problems, comments };
}

function scalarNode(text: string, e: ScalarEvent, interpret: ScalarInterpreter): LocatedScalar {
  let start = e.valueStart;
  let end = e.valueEnd;
  let style: RawScalar['style'];
  if (e.style === PLAIN) style = 'plain';
  else if (e.style === SINGLE || e.style === DOUBLE) {
    // The event's range is the text between the quotes.
    start--;
    end++;
    style = e.style === SINGLE ? 'single' : 'double';
  } else throw new Unsupported('block scalar');
  const source = text.slice(start, end);
  const raw: RawScalar = { source, style };
  if (!(style === 'plain' && e.fast)) raw.decoded = getScalarValue(text, e);
  return { kind: 'scalar', value: interpret(raw), raw: source, style, span: { start, end } };
}

/** End of `key:` when there is no value: past the colon if it follows the key. */
function afterColon(text: string, keyEnd: number): number {
  let i = keyEnd;
  while (i < text.length && text[i] === ' ') i++;
  return text[i] === ':' ? i + 1 : keyEnd;
}

/** Offset just past the `]` or `}` that closes a flow collection whose content ends at `from`. */
function closingBracket(text: string, from: number): number {
  let i = from;
  while (i < text.length) {
    const c = text.charCodeAt(i);
    if (c === 0x5d /* ] */ || c === 0x7d /* } */) return i + 1;
    if (c === 0x23 /* # */) {
      while (i < text.length && text.charCodeAt(i) !== 10) i++;
      continue;
    }
    if (c !== 0x20 && c !== 10 && c !== 13 && c !== 0x2c /* , */) throw new Unsupported('flow end');
    i++;
  }
  throw new Unsupported('flow end');
}

/**
 * Comments: a `#` at the start of a line or after a space, outside every scalar, up to the end
 * of its line. (Block scalars, tags and anchors, where `#` can mean something else, never reach
 * the fast reader.)
 */
function findComments(text: string, scalars: Span[]): SourceComment[] {
  const comments: SourceComment[] = [];
  let s = 0;
  let i = text.indexOf('#');
  while (i !== -1) {
    while (s < scalars.length && scalars[s]!.end <= i) s++;
    if (s < scalars.length && scalars[s]!.start <= i) {
      i = text.indexOf('#', scalars[s]!.end);
      continue;
    }
    const prev = i === 0 ? 10 : text.charCodeAt(i - 1);
    if (prev === 10 || prev === 0x20 || prev === 13) {
      let end = text.indexOf('\n', i);
      if (end === -1) end = text.length;
      if (text.charCodeAt(end - 1) === 13) end--;
      comments.push({ start: i, end, text: text.slice(i + 1, end) });
      i = text.indexOf('#', end);
    } else i = text.indexOf('#', i + 1);
  }
  return comments;
}
