/**
 * Concept edits -> minimal text edits. The document is never re-serialised: a value is replaced in
 * place, an inserted key goes next to its siblings with their indentation and spacing, a removed
 * key takes its own line(s) with it. When an edit cannot be made without breaking the text or
 * losing a comment, the whole fix is given up (null).
 *
 * Syntax safety, without parsing the file once per fix:
 * - On a file that parsed cleanly, the shapes written here keep the syntax by construction: a
 *   scalar token (checked against the token grammar below) in place of a one-line scalar, a list
 *   of number tokens with the list's own separators, whole `key: value` lines at a sibling's
 *   indentation in a block map, whole block-map lines removed, JSON members added or removed
 *   with their commas (JSON's grammar has no context beyond the comma).
 * - Anything else is "risky" and the edited text is parsed again before the fix is offered (as
 *   every fix was once): a file with parse problems (its tree is partial; a dropped duplicate key
 *   still has its comma), YAML flow collections, a key that does not start its line or follows a
 *   dash with tabs, a removed line that defines an anchor (an alias elsewhere may need it), a
 *   value text outside the token grammar.
 * - Where a fix is applied, the result is checked in full again: the fix loop re-analyses every
 *   round and refuses a round that adds a parse error (fix/loop.ts), and LSP code actions parse
 *   the result of each fix they hand out (editsKeepSyntax, lsp/codeActions.ts). Printed fixes
 *   (`check --format json`, SARIF) rely on the construction above.
 */
import type { TextEdit } from '../base/findings';
import type { Concept, ConceptValues } from '../fields/concepts';
import { CONCEPT_GROUP } from '../fields/concepts';
import type { LocatedEntry, LocatedList, LocatedMap, LocatedNode, LocatedScalar, ParsedFile, SourceFormat } from '../parse/types';
import type { ConceptEdit } from '../rules/types';
import type { FieldSource, Setup } from '../setup/types';
import { applyEdits, editsConflict, sortEdits } from './apply';
import { parseText } from '../parse';
import { withLoneCrAsLf } from '../parse/yaml';
import { commentStartingAt, rangeHasComment } from './comments';
import { formatBoolean, formatNumber, formatString, requote, type QuoteStyle } from './format';
import { KEY_ALIASES } from '../fields/aliases';
import { normalizeKeySegment } from '../fields/normalize';
import { INSERT_KEY, INTEGER_CONCEPTS, insertKeyFor, spellEnum, targetAsBoolean } from './spellings';
import { isBlank, keySpanWithQuotes, lineBreakOf, lineStartOf, nextLineStart } from './text';

/** Thrown inside rendering to give up on the whole fix. */
class GiveUp extends Error {}

function giveUp(why: string): never {
  throw new GiveUp(why);
}

const BOOLEAN_CONCEPTS: ReadonlySet<Concept> = new Set<Concept>(['zeroTerminalSnr', 'thresholding', 'latentSpace', 'karrasSigmas']);
const ENUM_CONCEPTS: ReadonlySet<Concept> = new Set<Concept>(['betaSchedule', 'predictionTarget', 'timestepSpacing', 'sampler']);

const JSON_NUMBER = /^-?(?:0|[1-9]\d*)(?:\.\d+)?(?:[eE][-+]?\d+)?$/;
const YAML_NUMBER = /^[-+]?(?:\d+\.?\d*|\.\d+)(?:[eE][-+]?\d+)?$/;
/** A JSON string, without the raw characters some YAML readers take for line breaks. */
const JSON_STRING = /^"(?:[^"\\\u0000-\u001f\u0080-\u009f\u2028\u2029\ufeff]|\\(?:["\\/bfnrt]|u[0-9a-fA-F]{4}))*"$/;
/** YAML plain words: no indicator, no `: ` or ` #`, nothing a flow collection stops at. */
const YAML_WORD = /^[A-Za-z_][A-Za-z0-9_.+-]*$/;
const YAML_SINGLE = /^'(?:[^'\r\n]|'')*'$/;
/** TOML v1.0.0 tokens: numbers (no leading zeros, digits on both sides of a dot), one-line strings. */
const TOML_NUMBER = /^[-+]?(?:0|[1-9]\d*)(?:\.\d+)?(?:[eE][-+]?\d+)?$/;
const TOML_BASIC = /^"(?:[^"\\\u0000-\u001f\u007f]|\\(?:["\\bfnrt]|u[0-9a-fA-F]{4}))*"$/;
const TOML_LITERAL = /^'[^'\u0000-\u0008\u000a-\u001f\u007f]*'$/;
const TOML_BARE_KEY = /^[A-Za-z0-9_-]+$/;
/** The leading segments of a dotted TOML key (`scheduler.`, `"a b" . c.`), up to the last one. */
const TOML_KEY_PREFIX = /^(?:(?:[A-Za-z0-9_-]+|"(?:[^"\\\r\n]|\\.)*"|'[^'\r\n]*')[ \t]*\.[ \t]*)*$/;

/** True when `text` is a number token that YAML and (for JSON files) JSON read as written. */
function isNumberToken(text: string, format: SourceFormat): boolean {
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
function isNumberList(text: string, format: SourceFormat): boolean {
  const m = /^\[(.*)\]$/.exec(text);
  return m !== null && m[1].split(', ').every((n) => isNumberToken(n, format));
}

interface LineView {
  /** The text the line computations run on: a lone CR reads as LF (same length, same offsets). */
  text: string;
  /** Line break written inside rendered edits (before `crOut`). */
  eol: '\n' | '\r\n';
  crOut: boolean;
}

/** Per parsed file, computed once: scanning the whole text per fix made many-document files quadratic. */
const lineViews = new WeakMap<ParsedFile, LineView>();

function lineView(parsed: ParsedFile): LineView {
  let view = lineViews.get(parsed);
  if (!view) {
    const ending = parsed.lineEnding;
    view = { text: withLoneCrAsLf(parsed.text), eol: ending === '\r' ? '\n' : ending, crOut: ending === '\r' };
    lineViews.set(parsed, view);
  }
  return view;
}

interface PendingInsert {
  map: LocatedMap;
  anchor: LocatedEntry | null;
  members: { concept: Concept; key: string; value: string }[];
}

class Renderer {
  readonly text: string;
  readonly format: SourceFormat;
  readonly eol: string;
  private readonly edits: TextEdit[] = [];
  private readonly removed = new Set<LocatedEntry>();
  /** Commas that removals in flow maps delete: an insert must not rely on them. */
  private readonly removedCommas = new Set<number>();
  private readonly inserts: PendingInsert[] = [];
  private booleanSpelling: 'lower' | 'title' | 'upper' | undefined;
  private insertQuote: QuoteStyle | undefined;
  /** Why the edits need a parse of the result before they are offered (see the module comment). */
  riskyBecause: string | null = null;
  /** The file breaks its lines with lone CRs: new line breaks are written as CR too. */
  private readonly crOut: boolean;

  constructor(
    readonly parsed: ParsedFile,
    readonly setup: Setup,
  ) {
    const view = lineView(parsed);
    this.text = view.text;
    this.format = parsed.format;
    this.eol = view.eol;
    this.crOut = view.crOut;
  }

  /** Marks the rendered edits as outside the shapes that keep the syntax by construction. */
  private risky(why: string): void {
    this.riskyBecause ??= why;
  }

  run(edits: readonly ConceptEdit[]): TextEdit[] {
    const seen = new Set<Concept>();
    for (const edit of edits) {
      if (seen.has(edit.concept)) giveUp(`two edits of ${edit.concept}`);
      seen.add(edit.concept);
      if (this.setup.problems.some((p) => p.concept === edit.concept && p.kind === 'duplicate')) giveUp('duplicate keys');
    }
    // Removals first, so that an insertion never anchors on an entry that goes away.
    for (const edit of edits) if (edit.kind === 'remove') this.remove(edit.concept, edit.keepComment === true);
    for (const edit of edits) if (edit.kind === 'set') this.set(edit.concept, edit.value);
    for (const pending of this.inserts) this.renderInsert(pending);
    return this.finish();
  }

  // ---- lookup ------------------------------------------------------------------------------

  private sourceOf(concept: Concept): FieldSource | null {
    const field = this.setup.fields[concept];
    if (field?.source) return field.source;
    return this.setup.problems.find((p) => p.concept === concept)?.source ?? null;
  }

  private documentRoot(): LocatedNode | null {
    return this.parsed.documents.find((d) => d.index === this.setup.documentIndex)?.root ?? this.setup.rootMap;
  }

  private isFlow(map: LocatedMap): boolean {
    return this.format === 'json' || this.format === 'jsonc' || map.style === 'flow';
  }

  // ---- set ---------------------------------------------------------------------------------

  private set(concept: Concept, value: ConceptValues[Concept]): void {
    const source = this.sourceOf(concept);
    if (source) this.replace(concept, value, source);
    else {
      const empty = this.emptyEntryFor(concept);
      if (empty) this.replace(concept, value, empty);
      else this.queueInsert(concept, value);
    }
  }

  /**
   * `key:` with nothing after it is not a setting to the reader, but it is where the user meant the
   * value to go: an empty entry whose key is a spelling of the concept.
   */
  private emptyEntryFor(concept: Concept): { entry: LocatedEntry; key: string; parent: LocatedMap } | null {
    // TOML has no key without a value.
    if (this.format === 'toml') return null;
    const spellings = new Set<string>();
    for (const alias of KEY_ALIASES[concept] ?? []) {
      if (alias.kind === 'key' && !alias.spelling.includes('.')) spellings.add(normalizeKeySegment(alias.spelling));
    }
    for (const key of Object.values(INSERT_KEY[concept] ?? {})) spellings.add(normalizeKeySegment(key));
    const found: { entry: LocatedEntry; key: string; parent: LocatedMap }[] = [];
    walkMaps(this.documentRoot(), (map) => {
      for (const entry of map.entries) {
        if (entry.value === null && spellings.has(normalizeKeySegment(entry.key))) found.push({ entry, key: entry.key, parent: map });
      }
    });
    return found.length === 1 ? found[0] : null;
  }

  private replace(concept: Concept, value: ConceptValues[Concept], source: Pick<FieldSource, 'entry' | 'key' | 'parent'>): void {
    const node = source.entry.value;
    const text = this.text;
    if (concept === 'betas') {
      if (!Array.isArray(value)) giveUp('betas needs a list');
      if (node?.kind === 'list') {
        this.replaceList(node, value);
        return;
      }
    }
    if (node && node.kind !== 'scalar') giveUp('value is a map or a list');
    const keySpan = keySpanWithQuotes(text, source.entry.keySpan);
    if (!node) {
      // `key:` with nothing after it: write the value after the colon.
      const colon = text.indexOf(':', keySpan.end);
      if (colon < 0 || !isBlank(text.slice(keySpan.end, colon))) giveUp('no colon after the key');
      const rest = text.slice(colon + 1, lineBreakOf(text, colon + 1));
      if (!/^[ \t]*(#.*)?$/.test(rest)) giveUp('unexpected text after the key');
      const valueText = this.valueText(concept, value, null, source.key);
      if (this.isFlow(source.parent)) this.risky('value written into an empty flow-map entry');
      if (!isScalarToken(valueText, this.format) && !isNumberList(valueText, this.format)) this.risky('value text outside the token grammar');
      this.edits.push({ span: { start: colon + 1, end: colon + 1 }, newText: ` ${valueText}` });
      return;
    }
    // The value must sit right after `key:` (no anchor, tag, or alias resolved from elsewhere).
    const between = text.slice(keySpan.end, node.span.start);
    const separator = this.format === 'yaml' ? /^[ \t]*:[ \t]*(\r?\n[ \t]*)?$/ : this.format === 'toml' ? /^[ \t]*=[ \t]*$/ : /^\s*:\s*$/;
    if (!separator.test(between)) giveUp('value is not written right after its key');
    if (node.kind === 'scalar') {
      if (node.style === 'block') giveUp('block scalar');
      const current = text.slice(node.span.start, node.span.end);
      if (/[\r\n]/.test(current)) giveUp('multi-line value');
      if (current.startsWith('*') || current.startsWith('&') || current.startsWith('!')) giveUp('alias, anchor or tag');
    }
    const valueText = this.valueText(concept, value, node, source.key);
    if (valueText === text.slice(node.span.start, node.span.end)) return;
    if (node.kind !== 'scalar' || !isScalarToken(valueText, this.format)) this.risky('value text outside the token grammar');
    this.edits.push({ span: { ...node.span }, newText: valueText });
  }

  /** The text of a value, spelled like the value it replaces (or like the file, for an insert). */
  private valueText(concept: Concept, value: ConceptValues[Concept], old: LocatedNode | null, key: string | null): string {
    const oldScalar: LocatedScalar | null = old?.kind === 'scalar' ? old : null;
    const oldQuote: QuoteStyle = oldScalar && (oldScalar.style === 'single' || oldScalar.style === 'double') ? oldScalar.style : 'plain';
    const keepQuotes = (s: string) => requote(s, oldQuote);
    if (concept === 'betas') {
      if (!Array.isArray(value) || value.length === 0) giveUp('betas needs a non-empty list');
      return `[${value.map((b) => this.number(concept, b, null)).join(', ')}]`;
    }
    if (concept === 'predictionTarget' && typeof oldScalar?.value === 'boolean') {
      // `v_parameterization: true` style.
      const b = targetAsBoolean(value as ConceptValues['predictionTarget']);
      if (b === null) giveUp('target cannot be written as a boolean');
      return keepQuotes(formatBoolean(b, this.format === 'yaml' ? this.booleanStyle(oldScalar) : 'lower'));
    }
    if (BOOLEAN_CONCEPTS.has(concept)) {
      if (typeof value !== 'boolean') giveUp(`${concept} needs a boolean`);
      return keepQuotes(formatBoolean(value, this.format === 'yaml' ? this.booleanStyle(oldScalar) : 'lower'));
    }
    if (ENUM_CONCEPTS.has(concept)) {
      if (typeof value !== 'string') giveUp(`${concept} needs a name`);
      const oldValue = typeof oldScalar?.value === 'string' ? oldScalar.value : null;
      const spelled = spellEnum(concept, value, { key, oldValue, style: this.setup.keyStyle });
      if (spelled === null) giveUp(`no spelling for ${concept} ${value}`);
      const quote = oldScalar ? oldQuote : this.preferredQuote();
      return formatString(spelled, this.format, quote);
    }
    if (typeof value !== 'number') giveUp(`${concept} needs a number`);
    return keepQuotes(this.number(concept, value, oldScalar?.raw ?? null));
  }

  private number(concept: Concept, n: number, oldRaw: string | null): string {
    const s = formatNumber(n, { format: this.format, oldRaw, integer: INTEGER_CONCEPTS.has(concept) });
    if (s === null) giveUp(`cannot write ${n}`);
    return s;
  }

  /** How the file spells booleans: the replaced value's casing, else the first boolean found. */
  private booleanStyle(old: LocatedScalar | null): 'lower' | 'title' | 'upper' {
    const casing = (raw: string) => (raw === raw.toUpperCase() ? 'upper' : raw[0] === raw[0].toUpperCase() ? 'title' : 'lower');
    if (old && typeof old.value === 'boolean' && old.style === 'plain') return casing(old.raw);
    if (this.booleanSpelling === undefined) {
      this.booleanSpelling = 'lower';
      walkScalars(this.documentRoot(), (s) => {
        if (typeof s.value === 'boolean' && s.style === 'plain' && /^[a-z]/i.test(s.raw)) {
          this.booleanSpelling = casing(s.raw);
          return true;
        }
        return false;
      });
    }
    return this.booleanSpelling;
  }

  /** The quoting most string values of the document use (for inserted enum values). */
  private preferredQuote(): QuoteStyle {
    if (this.insertQuote === undefined) {
      const counts = { plain: 0, single: 0, double: 0 };
      walkScalars(this.documentRoot(), (s) => {
        if (typeof s.value === 'string' && s.style !== 'block' && /^[A-Za-z_]/.test(s.value)) counts[s.style]++;
        return false;
      });
      this.insertQuote = counts.double > counts.plain && counts.double >= counts.single ? 'double' : counts.single > counts.plain ? 'single' : 'plain';
    }
    return this.insertQuote;
  }

  // ---- lists (explicit betas) ----------------------------------------------------------------

  private replaceList(list: LocatedList, values: number[]): void {
    const text = this.text;
    if (values.length === 0) giveUp('empty beta list');
    if (rangeHasComment(this.parsed, list.span.start, list.span.end)) giveUp('comments inside the list');
    const items = list.items;
    if (items.some((item) => item.kind !== 'scalar')) giveUp('list of non-scalars');
    const written = values.map((b, i) => this.number('betas', b, (items[Math.min(i, items.length - 1)] as LocatedScalar | undefined)?.raw ?? null));
    if (!written.every((n) => isNumberToken(n, this.format))) this.risky('beta text outside the number grammar');
    const isFlow = this.format !== 'yaml' || list.style === 'flow';
    if (isFlow) {
      const open = list.span.start;
      const close = list.span.end - 1;
      if (text[open] !== '[' || text[close] !== ']') giveUp('flow list without brackets');
      if (items.length === 0) {
        this.edits.push({ span: { ...list.span }, newText: `[${written.join(', ')}]` });
        return;
      }
      const prefix = text.slice(open + 1, items[0].span.start);
      const suffix = text.slice(items[items.length - 1].span.end, close);
      // Group the original items by line to keep the wrapping: items per line and the break.
      let line = 0;
      let perLine = 0;
      let onThisLine = 0;
      let inlineSep: string | null = null;
      let lineSep: string | null = null;
      for (let i = 0; i < items.length; i++) {
        if (i > 0) {
          const gap = text.slice(items[i - 1].span.end, items[i].span.start);
          if (gap.includes('\n')) {
            line++;
            lineSep ??= gap;
            onThisLine = 0;
          } else {
            inlineSep ??= gap;
          }
        }
        onThisLine++;
        perLine = Math.max(perLine, onThisLine);
      }
      inlineSep ??= ', ';
      if (!/^\s*,\s*$/.test(inlineSep) || (lineSep !== null && !/^[ \t]*,[ \t]*\r?\n[ \t]*$/.test(lineSep))) giveUp('unusual list separators');
      let body: string;
      if (line === 0 || lineSep === null) {
        body = written.join(inlineSep);
      } else {
        const rows: string[] = [];
        for (let i = 0; i < written.length; i += perLine) rows.push(written.slice(i, i + perLine).join(inlineSep));
        body = rows.join(lineSep);
      }
      this.edits.push({ span: { start: open + 1, end: close }, newText: prefix + body + suffix });
      return;
    }
    // Block list: `- value` lines with one indentation.
    let dashPrefix: string | null = null;
    for (const item of items) {
      const prefix = text.slice(lineStartOf(text, item.span.start), item.span.start);
      if (!/^[ \t]*-[ \t]+$/.test(prefix)) giveUp('block list item not on its own line');
      if (dashPrefix !== null && prefix !== dashPrefix) giveUp('uneven list indentation');
      dashPrefix = prefix;
      if (/[\r\n]/.test(text.slice(item.span.start, item.span.end))) giveUp('multi-line list item');
    }
    if (dashPrefix === null) giveUp('empty block list');
    const sep = items.length > 1 ? text.slice(items[0].span.end, items[1].span.start) : this.eol + dashPrefix;
    if (sep !== '\n' + dashPrefix && sep !== '\r\n' + dashPrefix) giveUp('blank lines inside the list');
    const first = items[0].span.start;
    const last = items[items.length - 1].span.end;
    this.edits.push({ span: { start: first, end: last }, newText: written.join(sep) });
  }

  // ---- insert ------------------------------------------------------------------------------

  private queueInsert(concept: Concept, value: ConceptValues[Concept]): void {
    const { map, anchor } = this.insertionPlace(concept);
    const keys = map.entries.map((e) => e.key);
    // A consuming class with a profile takes its own spellings only (consumer profile stage).
    const consumerKeys = this.setup.consumer?.insertKeys;
    const key = consumerKeys ? (consumerKeys[concept] ?? null) : insertKeyFor(concept, this.setup.keyStyle, keys);
    if (key === null) giveUp(`no key to write ${concept}`);
    const squash = (s: string) => s.toLowerCase().replace(/[_\-]/g, '');
    if (keys.some((k) => squash(k) === squash(key))) giveUp(`the map already has a key like ${key}`);
    const valueText = this.valueText(concept, value, null, key);
    let pending = this.inserts.find((p) => p.map === map && p.anchor === anchor);
    if (!pending) {
      pending = { map, anchor, members: [] };
      this.inserts.push(pending);
    }
    if (pending.members.some((m) => m.key === key)) giveUp('two inserts of one key');
    if (!isScalarToken(valueText, this.format) && !isNumberList(valueText, this.format)) this.risky('value text outside the token grammar');
    pending.members.push({ concept, key, value: valueText });
  }

  /**
   * The map that holds the most concepts of the same group (else of any group, else the document
   * root), and the last such entry in it, which the new entry follows.
   */
  private insertionPlace(concept: Concept): { map: LocatedMap; anchor: LocatedEntry | null } {
    const sources: FieldSource[] = [];
    const sameGroup: FieldSource[] = [];
    const group = CONCEPT_GROUP[concept];
    for (const [name, field] of Object.entries(this.setup.fields) as [Concept, { source: FieldSource | null } | undefined][]) {
      const source = field?.source;
      if (!source || this.removed.has(source.entry) || !source.parent.entries.includes(source.entry)) continue;
      sources.push(source);
      if (CONCEPT_GROUP[name] === group) sameGroup.push(source);
    }
    for (const candidates of [sameGroup, sources]) {
      if (candidates.length === 0) continue;
      const byMap = new Map<LocatedMap, LocatedEntry[]>();
      for (const s of candidates) {
        const list = byMap.get(s.parent) ?? [];
        list.push(s.entry);
        byMap.set(s.parent, list);
      }
      let best: { map: LocatedMap; entries: LocatedEntry[] } | null = null;
      for (const [map, entries] of byMap) {
        if (!best || entries.length > best.entries.length || (entries.length === best.entries.length && map.span.start < best.map.span.start)) {
          best = { map, entries };
        }
      }
      if (best) {
        const anchor = best.entries.reduce((a, b) => (b.span.start > a.span.start ? b : a));
        return { map: best.map, anchor };
      }
    }
    const root = this.setup.rootMap;
    if (!root) giveUp('the document has no map to insert into');
    const live = root.entries.filter((e) => !this.removed.has(e));
    return { map: root, anchor: live.length > 0 ? live[live.length - 1] : null };
  }

  private keyText(key: string, like: LocatedEntry | null): string {
    if (this.format === 'toml') return this.tomlDottedPrefix(like) + (TOML_BARE_KEY.test(key) ? key : JSON.stringify(key));
    if (this.format !== 'yaml') return JSON.stringify(key);
    if (like) {
      const q = this.text[keySpanWithQuotes(this.text, like.keySpan).start];
      if (q === '"') return JSON.stringify(key);
      if (q === "'") return `'${key}'`;
    }
    return key;
  }

  /**
   * The leading segments of a sibling's dotted key (`noise_scheduler.` for
   * `noise_scheduler.beta_schedule = ...`): a key written with them lands in the same table.
   */
  private tomlDottedPrefix(like: LocatedEntry | null): string {
    if (!like) return '';
    if (!like.tomlKey) giveUp('sibling is not written by a key/value line');
    const prefix = this.text.slice(like.tomlKey.start, keySpanWithQuotes(this.text, like.keySpan).start);
    if (!TOML_KEY_PREFIX.test(prefix)) giveUp('unusual dotted key');
    return prefix;
  }

  private renderInsert(p: PendingInsert): void {
    if (this.format === 'toml' && !this.isFlow(p.map)) this.renderTomlInsert(p);
    else if (this.isFlow(p.map)) this.renderFlowInsert(p);
    else this.renderBlockInsert(p);
  }

  private renderBlockInsert(p: PendingInsert): void {
    const text = this.text;
    const anchor = p.anchor;
    if (!anchor) giveUp('empty block map');
    const keySpan = keySpanWithQuotes(text, anchor.keySpan);
    const lineStart = lineStartOf(text, keySpan.start);
    const before = text.slice(lineStart, keySpan.start);
    const indent = isBlank(before) ? before : ' '.repeat(before.length);
    if (/\t/.test(indent)) giveUp('tab indentation');
    // A sibling that starts its line, or follows list dashes: the new key lands in the same column.
    if (!isBlank(before) && !/^(?: *- +)+$/.test(before)) this.risky('sibling key does not start its line');
    // Spacing after the colon: `key: value`, or aligned values when the sibling aligns them.
    let valueColumn: number | null = null;
    const value = anchor.value;
    if (value && value.kind === 'scalar') {
      const between = text.slice(keySpan.end, value.span.start);
      if (/^:[ ]{2,}$/.test(between)) valueColumn = value.span.start - lineStart;
    }
    const lines = p.members.map((m) => {
      const key = this.keyText(m.key, anchor);
      if (!isScalarToken(key, this.format)) this.risky('key text outside the token grammar');
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
    const newText = atEndWithoutBreak ? lines.map((l) => this.eol + l).join('') : lines.map((l) => l + this.eol).join('');
    this.edits.push({ span: { start: at, end: at }, newText });
  }

  private renderFlowInsert(p: PendingInsert): void {
    const text = this.text;
    const map = p.map;
    const open = map.span.start;
    const close = map.span.end - 1;
    if (text[open] !== '{' || text[close] !== '}') giveUp('flow map without braces');
    if (this.format === 'yaml' && rangeHasComment(this.parsed, map.span.start, map.span.end)) giveUp('comments inside a YAML flow map');
    if (this.format === 'yaml') this.risky('insert into a YAML flow map');
    // TOML v1.0.0 inline tables stay on one line and have no trailing comma: the result is parsed.
    if (this.format === 'toml') this.risky('insert into a TOML inline table');
    const anchor = p.anchor;
    const members = (colon: string) => p.members.map((m) => `${this.keyText(m.key, anchor)}${colon}${m.value}`);
    if (!anchor && this.format === 'toml') giveUp('empty TOML inline table');
    for (const m of p.members) if (!isScalarToken(this.keyText(m.key, anchor), this.format)) this.risky('key text outside the token grammar');
    if (!anchor) {
      if (!isBlank(text.slice(open + 1, close))) giveUp('empty flow map with content');
      this.edits.push({ span: { start: open + 1, end: close }, newText: members(': ').join(', ') });
      return;
    }
    const keySpan = keySpanWithQuotes(text, anchor.keySpan);
    const valueStart = anchor.value ? anchor.value.span.start : keySpan.end;
    const colonText = text.slice(keySpan.end, valueStart);
    const colon = this.format === 'toml' ? (/^[ \t]*=[ \t]*$/.test(colonText) ? colonText : ' = ') : /^[ \t]*:[ \t]*$/.test(colonText) ? colonText : ': ';
    const after = anchor.span.end;
    // What follows the sibling on its line: an optional comma, then maybe a comment.
    let p1 = skipSpaces(text, after);
    const commaHere = text[p1] === ',';
    // A comma that a removal in this fix deletes does not count: the new member brings its own.
    const hasComma = commaHere && !this.removedCommas.has(p1);
    if (commaHere) p1 = skipSpaces(text, p1 + 1);
    const comment = commentStartingAt(this.parsed, p1);
    if (comment) p1 = skipSpaces(text, comment.end);
    const endsLine = p1 >= text.length || text[p1] === '\n' || text[p1] === '\r';
    const lineStart = lineStartOf(text, keySpan.start);
    const startsLine = isBlank(text.slice(lineStart, keySpan.start));
    if (endsLine && startsLine) {
      // One member per line: add lines after the sibling's line, commas between members.
      const indent = text.slice(lineStart, keySpan.start);
      const rendered = members(colon);
      const lines = rendered.map((m, i) => `${this.eol}${indent}${m}${hasComma || i < rendered.length - 1 ? ',' : ''}`);
      if (!hasComma) this.edits.push({ span: { start: after, end: after }, newText: ',' });
      const at = lineBreakOf(text, p1);
      this.edits.push({ span: { start: at, end: at }, newText: lines.join('') });
      return;
    }
    // Members on one line: `, key: value` right after the sibling, with the map's comma spacing.
    const sepMatch = /,([ \t]*)/.exec(text.slice(map.entries[0].span.end, map.span.end));
    const spacing = map.entries.length > 1 && sepMatch ? sepMatch[1] : ' ';
    const inline = members(colon).map((m) => `,${spacing}${m}`).join('');
    this.edits.push({ span: { start: after, end: after }, newText: inline });
  }

  /**
   * A `key = value` line after the sibling's line, in its table: same indentation and dotted
   * prefix, `=` aligned when the sibling aligns it. Valid by construction: the key is new in that
   * table (queueInsert checks) and the value is one token.
   */
  private renderTomlInsert(p: PendingInsert): void {
    const text = this.text;
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
    const eqColumn = keyEnd + m[1].length - lineStart;
    const lines = p.members.map((member) => {
      const key = this.keyText(member.key, anchor);
      const pad = m[1].length > 1 ? Math.max(1, eqColumn - (indent.length + key.length)) : m[1].length;
      return `${indent}${key}${' '.repeat(pad)}=${m[2]}${member.value}`;
    });
    const end = anchor.span.end;
    const rest = text.slice(end, lineBreakOf(text, end));
    if (!/^[ \t]*(#.*)?$/.test(rest)) giveUp('text after the sibling entry');
    const at = nextLineStart(text, end);
    const atEndWithoutBreak = at === text.length && !text.endsWith('\n');
    const newText = atEndWithoutBreak ? lines.map((l) => this.eol + l).join('') : lines.map((l) => l + this.eol).join('');
    this.edits.push({ span: { start: at, end: at }, newText });
  }

  /**
   * Removes a `key = value` line. With `keepComment`, a comment at the end of the line stays where
   * it was (the line keeps the comment alone); otherwise the whole line goes. An emptied table is
   * valid TOML.
   */
  private removeTomlLine(entry: LocatedEntry, keepComment: boolean): void {
    const text = this.text;
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
      this.edits.push({ span: { start: keyStart, end: end + m[1].length }, newText: '' });
      return;
    }
    let from = lineStart;
    const to = nextLineStart(text, end);
    if (to === text.length && !text.endsWith('\n') && lineStart > 0) {
      // Last line without a line break: take the break before it instead, keeping the ending.
      from = lineStart - 1;
      if (from > 0 && text[from - 1] === '\r') from--;
    }
    this.edits.push({ span: { start: from, end: to }, newText: '' });
  }

  // ---- remove ------------------------------------------------------------------------------

  private remove(concept: Concept, keepComment: boolean): void {
    const source = this.sourceOf(concept);
    if (!source) return;
    const { entry, parent } = source;
    if (!parent.entries.includes(entry)) giveUp('entry is not in its map');
    this.removed.add(entry);
    if (this.format === 'toml' && !this.isFlow(parent)) this.removeTomlLine(entry, keepComment);
    else if (this.isFlow(parent)) this.removeFlow(entry, parent, keepComment);
    else this.removeBlock(entry, parent, keepComment);
  }

  private removeBlock(entry: LocatedEntry, map: LocatedMap, keepComment = false): void {
    const text = this.text;
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
      if (rest.includes(':')) this.risky('colon after the removed entry');
    }
    // An anchor defined in the removed text may be what an alias elsewhere refers to.
    if (text.slice(keyStart, end).includes('&')) this.risky('removed text may define an anchor');
    if (isBlank(before) && keepComment && !valueEndsLine) {
      // `key: value  # why` -> `# why` at the key's indentation: the comment stays on its line.
      const lineEnd = lineBreakOf(text, end);
      const comment = commentStartingAt(this.parsed, skipSpaces(text, end));
      if (comment && comment.end <= lineEnd) {
        this.edits.push({ span: { start: keyStart, end: comment.start }, newText: '' });
        return;
      }
    }
    if (isBlank(before)) {
      let from = lineStart;
      let to = valueEndsLine ? end : nextLineStart(text, end);
      if (to === text.length && !text.endsWith('\n') && lineStart > 0) {
        // Last line without a line break: take the break before it instead, keeping the ending.
        from = lineStart - 1;
        if (from > 0 && text[from - 1] === '\r') from--;
      }
      this.edits.push({ span: { start: from, end: to }, newText: '' });
      return;
    }
    if (/^[ \t]*-[ \t]+$/.test(before) && index === 0) {
      // First key of a list item (`- key: value`): the next key moves up behind the dash.
      const next = map.entries[1];
      const nextStart = keySpanWithQuotes(text, next.keySpan).start;
      if (rangeHasComment(this.parsed, keyStart, nextStart)) giveUp('comment between list-item keys');
      this.risky('next key moves up behind a list dash');
      this.edits.push({ span: { start: keyStart, end: nextStart }, newText: '' });
      return;
    }
    giveUp('entry shares its line');
  }

  private removeFlow(entry: LocatedEntry, map: LocatedMap, keepComment = false): void {
    const text = this.text;
    if (this.format === 'yaml') this.risky('removal from a YAML flow map');
    if (this.format === 'toml') this.risky('removal from a TOML inline table');
    const index = map.entries.indexOf(entry);
    const keyStart = entry.tomlKey?.start ?? keySpanWithQuotes(text, entry.keySpan).start;
    const after = entry.span.end;
    let p = skipSpaces(text, after);
    const hasComma = text[p] === ',';
    const commaEnd = hasComma ? p + 1 : after;
    p = skipSpaces(text, commaEnd);
    const comment = commentStartingAt(this.parsed, p);
    if (comment) p = skipSpaces(text, comment.end);
    const endsLine = p >= text.length || text[p] === '\n' || text[p] === '\r';
    const lineStart = lineStartOf(text, keyStart);
    const startsLine = isBlank(text.slice(lineStart, keyStart));
    if (endsLine && startsLine) {
      // Keeping a trailing comment: only the member (and its comma) goes, the comment stays.
      const keepFrom = keepComment && comment ? comment.start : -1;
      if (keepFrom >= 0) this.edits.push({ span: { start: keyStart, end: keepFrom }, newText: '' });
      else this.edits.push({ span: { start: lineStart, end: nextLineStart(text, p) }, newText: '' });
      if (!hasComma && index > 0) {
        const comma = commaAfter(text, map.entries[index - 1].span.end, this.parsed);
        if (comma < 0) giveUp('no comma after the previous member');
        this.removedCommas.add(comma);
        this.edits.push({ span: { start: comma, end: comma + 1 }, newText: '' });
      }
      return;
    }
    if (hasComma) {
      this.edits.push({ span: { start: keyStart, end: skipSpaces(text, commaEnd) }, newText: '' });
    } else if (index > 0) {
      const comma = commaAfter(text, map.entries[index - 1].span.end, this.parsed);
      if (comma < 0) giveUp('no comma after the previous member');
      this.removedCommas.add(comma);
      this.edits.push({ span: { start: comma, end: after }, newText: '' });
    } else {
      this.edits.push({ span: { start: keyStart, end: after }, newText: '' });
    }
  }

  // ---- finish ------------------------------------------------------------------------------

  private finish(): TextEdit[] {
    const sorted = sortEdits(this.edits);
    const merged: TextEdit[] = [];
    for (const edit of sorted) {
      const last = merged[merged.length - 1];
      if (last && last.span.start === last.span.end && edit.span.start === edit.span.end && last.span.start === edit.span.start) {
        merged[merged.length - 1] = { span: last.span, newText: last.newText + edit.newText };
        continue;
      }
      if (last && editsConflict(last, edit)) giveUp('edits overlap');
      merged.push(edit);
    }
    for (let i = 0; i < merged.length; i++) {
      for (let j = i + 1; j < merged.length && merged[j].span.start < merged[i].span.end; j++) {
        if (editsConflict(merged[i], merged[j])) giveUp('edits overlap');
      }
    }
    if (this.crOut) for (const e of merged) e.newText = e.newText.replace(/\n/g, '\r');
    return merged;
  }
}

function skipSpaces(text: string, pos: number): number {
  while (pos < text.length && (text[pos] === ' ' || text[pos] === '\t')) pos++;
  return pos;
}

/** Offset of the comma that follows `pos` past whitespace and comments, or -1. */
function commaAfter(text: string, pos: number, parsed: ParsedFile): number {
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
function walkMaps(root: LocatedNode | null, visit: (map: LocatedMap) => void): void {
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
function walkScalars(root: LocatedNode | null, visit: (s: LocatedScalar) => boolean): void {
  const stack: LocatedNode[] = root ? [root] : [];
  let budget = 100_000;
  while (stack.length > 0 && budget-- > 0) {
    const node = stack.pop()!;
    if (node.kind === 'scalar') {
      if (visit(node)) return;
    } else if (node.kind === 'map') {
      for (let i = node.entries.length - 1; i >= 0; i--) {
        const v = node.entries[i].value;
        if (v) stack.push(v);
      }
    } else {
      for (let i = node.items.length - 1; i >= 0; i--) stack.push(node.items[i]);
    }
  }
}

/** Texts up to this size are parsed again after rendering risky edits, as a last check. */
const VALIDATE_MAX_CHARS = 512 * 1024;

/** Parse problems that leave the tree whole: edits on such a file keep the syntax by construction. */
const HARMLESS_PROBLEMS: ReadonlySet<string> = new Set(['bad-suppression', 'json-comment']);

function syntaxErrors(problems: ParsedFile['problems']): number {
  let n = 0;
  for (const p of problems) if (p.severity === 'error' && /^(yaml|json|toml)-/.test(p.code)) n++;
  return n;
}

/**
 * The text after `edits` has no more syntax errors than `parsed` and as many documents: a full
 * parse of the result. Where a fix is applied or handed to an editor, this is the last check.
 */
export function editsKeepSyntax(parsed: ParsedFile, edits: readonly TextEdit[]): boolean {
  let after: ParsedFile;
  try {
    after = parseText(applyEdits(parsed.text, edits), parsed.format, { maxFileBytes: Number.MAX_SAFE_INTEGER });
  } catch {
    return false;
  }
  return syntaxErrors(after.problems) <= syntaxErrors(parsed.problems) && after.documents.length === parsed.documents.length;
}

/**
 * Renders concept edits as minimal text edits, sorted by position and never overlapping.
 * Returns [] when the file already says what the edits ask, and null when the edits cannot be
 * written without breaking the text or losing a comment.
 */
export function renderConceptEdits(
  parsed: ParsedFile,
  setup: Setup,
  edits: ConceptEdit[],
  /** Told why no edit could be rendered: an expected give-up, or an unexpected failure. */
  onGiveUp?: (reason: string, unexpected: boolean) => void,
): TextEdit[] | null {
  try {
    const renderer = new Renderer(parsed, setup);
    const rendered = renderer.run(edits);
    const mustParse = renderer.riskyBecause !== null || !parsed.problems.every((p) => HARMLESS_PROBLEMS.has(p.code));
    if (rendered.length > 0 && mustParse && parsed.text.length <= VALIDATE_MAX_CHARS && !editsKeepSyntax(parsed, rendered)) return null;
    return rendered;
  } catch (err) {
    // Bad input never crashes the caller: either way the fix is not offered, and the caller learns why.
    const unexpected = !(err instanceof GiveUp);
    onGiveUp?.(err instanceof Error ? err.message : String(err), unexpected);
    return null;
  }
}

/** True when an edit replaces or deletes part of a comment (the engine then marks the fix `touchesComment`, so it is applied only on request). */
export function editsTouchComment(parsed: ParsedFile, edits: readonly TextEdit[]): boolean {
  return edits.some((e) => rangeHasComment(parsed, e.span.start, e.span.end));
}
